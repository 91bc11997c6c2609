"""The command line: range options that start with '-', no command, unknown options (exit 2)."""

import pytest

from legbridge.limits.cli import attach_range_values, main


def test_negative_range_values_are_attached_to_their_option():
    argv = ["sweep", "p.json", "--robot", "r", "--heights", "-0.05:0.05:5", "--rate", "500"]
    assert attach_range_values(argv) == ["sweep", "p.json", "--robot", "r", "--heights=-0.05:0.05:5", "--rate", "500"]
    # a following option is left alone, and so is a positive range
    assert attach_range_values(["review", "--sweep", "0:0.1:3", "--force"]) == ["review", "--sweep", "0:0.1:3", "--force"]


def test_no_command_and_unknown_options_exit_2(capsys):
    assert main([]) == 2
    with pytest.raises(SystemExit) as exc:
        main(["check", "--no-such-option"])
    assert exc.value.code == 2
    assert "legbridge: error" in capsys.readouterr().err


def test_an_internal_error_fails_closed_with_exit_3(monkeypatch, capsys):
    import legbridge.limits.cli.robot as robot_cmd

    def broken(args):
        raise ZeroDivisionError("a bug")

    monkeypatch.setattr(robot_cmd, "run_show", broken)
    assert main(["robot", "show", "example-leg"]) == 3
    err = capsys.readouterr().err
    assert "internal error (ZeroDivisionError: a bug)" in err and "Traceback" not in err


def test_a_closed_output_pipe_ends_quietly(monkeypatch, capfd):
    # BrokenPipeError is an OSError: its own branch must come first (Python docs, "Note on SIGPIPE"),
    # or a closed pipe would read as a file-system refusal with exit 2
    import legbridge.limits.cli.robot as robot_cmd

    def closed(args):
        raise BrokenPipeError(32, "Broken pipe")

    monkeypatch.setattr(robot_cmd, "run_show", closed)
    assert main(["robot", "show", "example-leg"]) == 1
    assert "error" not in capfd.readouterr().err


def test_canonical_and_earlier_option_names_meet():
    # one name per option in every command; the 0.1 names still parse to the same setting
    from legbridge.limits.cli import build_parser

    p = build_parser()
    for cmd in (["review", "plan.json", "--robot", "r", "-o", "out"], ["sweep", "plan.json", "--robot", "r"]):
        a = p.parse_args(cmd + ["--ground-offsets", "0:0.1:3"])
        b = p.parse_args(cmd + ["--heights" if cmd[0] == "sweep" else "--sweep", "0:0.1:3"])
        assert a.ground_offsets == b.ground_offsets == "0:0.1:3"
    for cmd in (["review", "plan.json", "--robot", "r"], ["check", "plan.json", "--robot", "r"],
                ["translate", "plan.json", "--robot", "r"], ["sweep", "plan.json", "--robot", "r"]):
        assert p.parse_args(cmd + ["--output", "x"]).output == p.parse_args(cmd + ["-o", "x"]).output == "x"
