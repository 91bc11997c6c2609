"""A generated corpus of bad inputs for the command line (imported by tests/test_bad_input_corpus.py).

Every case is a command line and the files it reads, all made here from small valid files (an
INVENTED two-case plan in every format, the bundled robot files): truncated, emptied, binary,
non-finite or absurd numbers, wrong types, mismatched lengths, deep nesting, huge integers, pickles,
an HDF5 (MAT v7.3) signature, reserved names, a URDF with a cycle or a negative mass, and command-line
misuse. Each must end with exit 2 and one line naming the file or option, write nothing and leave
every input byte-identical.
"""

from __future__ import annotations

import io
import json
import struct
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

ROBOT = "lab-biped-leg"


@dataclass
class Case:
    """name; files: name -> bytes written into the case's folder; argv: with {dir} for that folder."""

    name: str
    files: dict = field(default_factory=dict)
    argv: list = field(default_factory=list)


def base_files() -> dict:
    """Small valid inputs: an INVENTED plan (two short cases of the demo) in the four formats, and
    the bundled robot files."""
    from legbridge.mapping.plan import Plan
    from legbridge.mapping.plan_writer import write_plan
    from legbridge.mapping.slip.demo import shipped_demo_plan
    from legbridge.mapping.slip.to_plan import plan_for_flat_formats
    from legbridge.robots.library import library_path

    demo = shipped_demo_plan()
    cases = []
    for c in demo.cases[1:3]:
        keep = np.asarray(c.time_s) <= 0.3
        cut = {f: (np.asarray(getattr(c, f))[keep] if getattr(c, f) is not None else None)
               for f in ("time_s", "leg_length_m", "leg_angle_rad", "force_x_n", "force_z_n", "stance", "body_x_m",
                         "body_z_m", "body_vx_m_s", "body_vz_m_s")}
        from dataclasses import replace

        cases.append(replace(c, **cut, actuator_length_m=None, spring_deflection_m=None))
    plan = Plan(path="<corpus>", sha256="", cases=tuple(cases), metadata={"invented": "yes"})
    import tempfile

    out = {}
    with tempfile.TemporaryDirectory() as d:
        for ext in ("json", "csv", "npz", "mat"):
            p = Path(d) / f"plan.{ext}"
            write_plan(plan if ext == "json" else plan_for_flat_formats(plan), p)
            out[f"plan.{ext}"] = p.read_bytes()
    for name in ("lab-biped-leg.toml", "spatial-leg.toml", "spatial-leg.urdf"):
        out[name] = library_path(name).read_bytes()
    from legbridge.mapping.slip.demo import shipped_demo_plan_path

    out["demo.json"] = shipped_demo_plan_path().read_bytes()  # carries the model and the policy (sweeps)
    return out


def _check(plan: str, robot: str = ROBOT, *extra) -> list:
    return ["check", "{dir}/" + plan, "--robot", robot if robot == ROBOT else "{dir}/" + robot, "--rate", "200",
            "--quiet", "-o", "{dir}/out/review.json", *extra]


def _npz_with(arrays: dict) -> bytes:
    buf = io.BytesIO()
    np.savez(buf, **arrays)
    return buf.getvalue()


def _npz_header_lie(shape) -> bytes:
    """An NPZ whose one member's .npy header declares ``shape`` but holds 8 bytes."""
    header = ("{'descr': '<f8', 'fortran_order': False, 'shape': %s, }" % (tuple(shape),)).encode()
    header += b" " * ((64 - (10 + len(header) + 1) % 64) % 64) + b"\n"
    npy = b"\x93NUMPY\x01\x00" + struct.pack("<H", len(header)) + header + b"\x00" * 8
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as z:
        z.writestr("time_s.npy", npy)
    return buf.getvalue()


def cases() -> list[Case]:
    base = base_files()
    js = json.loads(base["plan.json"])
    out: list[Case] = []

    def add(name, files, argv):
        out.append(Case(name, {**files}, argv))

    # --- every plan format: empty, garbage, truncated at ten places
    for ext in ("json", "csv", "npz", "mat"):
        data = base[f"plan.{ext}"]
        add(f"{ext}-empty", {f"p.{ext}": b""}, _check(f"p.{ext}"))
        add(f"{ext}-binary", {f"p.{ext}": bytes(range(256)) * 8}, _check(f"p.{ext}"))
        add(f"{ext}-text-garbage", {f"p.{ext}": b"hello, world\n" * 40}, _check(f"p.{ext}"))
        for k in range(1, 11):
            cut = len(data) * k // 11
            if ext == "csv":  # cut a row after its second cell: a cut elsewhere may leave a valid, shorter table
                start = data.rfind(b"\n", 0, cut) + 1
                cut = data.index(b",", data.index(b",", start) + 1) + 1
            add(f"{ext}-truncated-{k}", {f"p.{ext}": data[:cut]}, _check(f"p.{ext}"))
    # --- JSON: values and structure
    def js_case(name, mutate):
        doc = json.loads(base["plan.json"])
        mutate(doc)
        add(f"json-{name}", {"p.json": json.dumps(doc, allow_nan=True).encode()}, _check("p.json"))

    cols = list(js["cases"][0]["columns"])
    for col in cols:
        for label, value in (("nan", float("nan")), ("inf", float("inf")), ("huge", 1e300), ("string", "x"),
                             ("null", None), ("bool", True)):
            def m(doc, col=col, value=value):
                doc["cases"][0]["columns"][col][3] = value
            js_case(f"{col}-{label}", m)
        js_case(f"{col}-short", lambda d, col=col: d["cases"][0]["columns"].__setitem__(col, d["cases"][0]["columns"][col][:-5]))
        if col in ("time_s", "leg_length_m", "leg_angle_rad", "force_x_n", "force_z_n"):  # the others are optional
            js_case(f"{col}-missing", lambda d, col=col: d["cases"][0]["columns"].pop(col))
        js_case(f"{col}-object", lambda d, col=col: d["cases"][0]["columns"].__setitem__(col, {"a": 1}))
    js_case("unknown-column", lambda d: d["cases"][0]["columns"].__setitem__("leg_colour", d["cases"][0]["columns"]["time_s"]))
    js_case("no-cases", lambda d: d.__setitem__("cases", []))
    js_case("cases-not-list", lambda d: d.__setitem__("cases", "all"))
    js_case("bad-format", lambda d: d.__setitem__("format", "other/9"))
    js_case("bad-units", lambda d: d.__setitem__("units", "furlongs"))
    js_case("time-backwards", lambda d: d["cases"][0]["columns"]["time_s"].reverse())
    js_case("time-repeated", lambda d: d["cases"][0]["columns"]["time_s"].__setitem__(4, d["cases"][0]["columns"]["time_s"][3]))
    js_case("duplicate-case", lambda d: d["cases"].append(d["cases"][0]))
    js_case("one-sample", lambda d: [d["cases"][0]["columns"].__setitem__(c, v[:1]) for c, v in list(d["cases"][0]["columns"].items())])
    js_case("time-1e300", lambda d: d["cases"][0]["columns"].__setitem__("time_s", [t * 1e300 for t in d["cases"][0]["columns"]["time_s"]]))
    js_case("length-millimetres", lambda d: d["cases"][0]["columns"].__setitem__("leg_length_m", [x * 1000 for x in d["cases"][0]["columns"]["leg_length_m"]]))
    js_case("angle-degrees", lambda d: d["cases"][0]["columns"].__setitem__("leg_angle_rad", [x * 57.3 for x in d["cases"][0]["columns"]["leg_angle_rad"]]))
    js_case("negative-length", lambda d: d["cases"][0]["columns"].__setitem__("leg_length_m", [-x for x in d["cases"][0]["columns"]["leg_length_m"]]))
    js_case("ground-pulls", lambda d: d["cases"][0]["columns"].__setitem__("force_z_n", [-1000.0 - x for x in d["cases"][0]["columns"]["force_z_n"]]))
    js_case("top-list", lambda d: (d.clear(), d.update({"x": [1, 2]})))
    deep = "[" * 100000 + "]" * 100000
    add("json-deep-nesting", {"p.json": deep.encode()}, _check("p.json"))
    add("json-huge-integer", {"p.json": base["plan.json"].replace(b'"time_s": [', b'"time_s": [' + b"9" * 5000 + b", ", 1)},
        _check("p.json"))
    add("json-not-utf8", {"p.json": b"\xff\xfe" + base["plan.json"]}, _check("p.json"))
    # --- CSV
    csv_text = base["plan.csv"].decode()
    lines = csv_text.splitlines(keepends=True)
    head = next(i for i, ln in enumerate(lines) if not ln.startswith("#"))
    def csv_case(name, text):
        add(f"csv-{name}", {"p.csv": text.encode() if isinstance(text, str) else text}, _check("p.csv"))
    csv_case("header-only", "".join(lines[: head + 1]))
    csv_case("no-header", "".join(lines[head + 1:]))
    csv_case("short-row", "".join(lines[: head + 3]) + ",".join(lines[head + 3].split(",")[:-2]) + "\n" + "".join(lines[head + 4:]))
    csv_case("long-row", "".join(lines[: head + 3]) + lines[head + 3].rstrip("\n") + ",1,2\n" + "".join(lines[head + 4:]))
    for k, bad in enumerate(("nan", "inf", "-inf", "1e300", "abc", "", "1,5", "0x10")):
        cells = lines[head + 5].rstrip("\n").split(",")
        cells[min(2, len(cells) - 1)] = bad
        csv_case(f"cell-{k}", "".join(lines[: head + 5]) + ",".join(cells) + "\n" + "".join(lines[head + 6:]))
    cells = lines[head + 5].rstrip("\n").split(",")
    cells[2] = "7" * 200000
    csv_case("cell-200kB", "".join(lines[: head + 5]) + ",".join(cells) + "\n" + "".join(lines[head + 6:]))
    csv_case("unknown-column", lines[head].rstrip("\n") + ",leg_colour\n" + "".join(ln.rstrip("\n") + ",1\n" for ln in lines[head + 1:]))
    csv_case("duplicate-column", "".join(lines[:head]) + lines[head].rstrip("\n") + ",time_s\n" + "".join(ln.rstrip("\n") + ",0\n" for ln in lines[head + 1:]))
    csv_case("nul-bytes", base["plan.csv"].replace(b",", b"\x00,", 20))
    csv_case("bad-metadata", "# units = furlongs\n" + "".join(lines[head:]))
    # --- NPZ
    add("npz-pickled-object", {"p.npz": _npz_with({"format": np.array("legbridge.plan/1"), "cases": np.array([{"a": 1}], dtype=object)})},
        _check("p.npz"))
    add("npz-empty-zip", {"p.npz": _npz_with({})}, _check("p.npz"))
    add("npz-header-1e12", {"p.npz": _npz_header_lie((10**12,))}, _check("p.npz"))
    add("npz-header-negative", {"p.npz": _npz_header_lie((-5,))}, _check("p.npz"))
    add("npz-wrong-members", {"p.npz": _npz_with({"a": np.arange(3.0)})}, _check("p.npz"))
    # --- MAT
    # a version 7.3 (HDF5-based) MAT-file: a 116-byte text header, 8 bytes of subsystem offset, the
    # version 0x0200 and the endian mark 'IM' (the level-5 header layout), then an HDF5 signature
    v73 = b"MAT-file, version 7.3, HDF5 schema 1.00 .".ljust(116, b" ") + b"\x00" * 8 + b"\x00\x02IM"
    add("mat-v73-signature", {"p.mat": v73.ljust(512, b"\x00") + b"\x89HDF\r\n\x1a\n" * 8}, _check("p.mat"))
    add("mat-empty-struct", {"p.mat": _mat_with({"x": np.zeros((0, 0))})}, _check("p.mat"))
    add("mat-wrong-types", {"p.mat": _mat_with({"format": np.array(["legbridge.plan/1"]), "cases": np.arange(4.0)})}, _check("p.mat"))
    # --- robot TOML
    toml = base["lab-biped-leg.toml"].decode()
    def robot_case(name, text, robot_name="r.toml"):
        add(f"robot-{name}", {"plan.json": base["plan.json"], robot_name: text.encode() if isinstance(text, str) else text},
            _check("plan.json", robot_name))
    robot_case("empty", "")
    robot_case("binary", bytes(range(256)) * 4)
    robot_case("not-toml", "[robot\nname = \n")
    for k in range(1, 9):
        robot_case(f"truncated-{k}", toml[: len(toml) * k // 9])
    for key, bad in (("body_mass_kg", "-22.0"), ("body_mass_kg", "0.0"), ("body_mass_kg", "1e300"), ("body_mass_kg", "nan"),
                     ("body_mass_kg", '"heavy"'), ("body_pitch_inertia_kgm2", "-0.9"), ("ground_friction", "-0.7"),
                     ("nominal_leg_length_m", "0.0"), ("nominal_leg_length_m", "inf"), ("knee", '"sideways"')):
        import re

        robot_case(f"{key}-{bad.strip(chr(34))}", re.sub(rf"^{key} = [^\n]*", f"{key} = {bad}", toml, count=1, flags=re.M))
    for key, bad in (("length_m", "-0.38"), ("length_m", "0"), ("length_m", "1e300"), ("mass_kg", "-2.2"),
                     ("com_m", "5.0"), ("inertia_kgm2", "-0.03"), ("inertia_kgm2", "0")):
        import re

        robot_case(f"segment-{key}-{bad}", re.sub(rf"^{key} = [^\n]*", f"{key} = {bad}", toml, count=1, flags=re.M))
    for key, bad in (("gear_ratio", "0"), ("gear_ratio", "-10"), ("gearbox_efficiency", "1.5"), ("gearbox_efficiency", "0"),
                     ("torque_constant_nm_per_a", "-0.2"), ("winding_resistance_ohm", "0"), ("bus_voltage_v", "-48"),
                     ("peak_current_a", "1e300"), ("continuous_current_a", "-1"), ("lower_rad", "5"), ("upper_rad", "-5"),
                     ("max_winding_temp_c", "-300"), ("thermal_time_constant_s", "0"), ("max_motor_speed_rad_s", "nan")):
        import re

        robot_case(f"joint-{key}-{bad}", re.sub(rf"^{key} = [^\n]*", f"{key} = {bad}", toml, count=1, flags=re.M))
    robot_case("unknown-key", toml.replace("[robot]\n", "[robot]\ncolour = \"red\"\n", 1))
    robot_case("joint-named-universe", toml.replace("[joints.hip]", "[joints.universe]"))
    robot_case("joint-named-base_x", toml.replace("[joints.hip]", "[joints.base_x]"))
    robot_case("deep-nesting", "a = " + "[" * 5000 + "]" * 5000 + "\n")
    robot_case("huge-integer", toml.replace("gear_ratio = 10.0", "gear_ratio = " + "9" * 500, 1))
    robot_case("legs-three", toml.replace("[robot]\n", "[robot]\nlegs = [\"left\", \"right\", \"middle\"]\n", 1))
    robot_case("right-without-biped", toml + "\n[right]\nx = 1\n")
    # URDF robots
    urdf = base["spatial-leg.urdf"].decode()
    stoml = base["spatial-leg.toml"].decode()
    def urdf_case(name, text):
        add(f"urdf-{name}", {"plan.json": base["plan.json"], "spatial-leg.toml": stoml.encode(),
                             "spatial-leg.urdf": text.encode() if isinstance(text, str) else text},
            _check("plan.json", "spatial-leg.toml"))
    urdf_case("empty", "")
    urdf_case("binary", bytes(range(256)) * 4)
    for k in range(1, 7):
        urdf_case(f"truncated-{k}", urdf[: len(urdf) * k // 7])
    import re

    urdf_case("negative-mass", re.sub(r'<mass value="([0-9.]+)"', '<mass value="-\\1"', urdf, count=2))
    urdf_case("nan-mass", re.sub(r'<mass value="([0-9.]+)"', '<mass value="nan"', urdf, count=1))
    urdf_case("zero-inertia", re.sub(r'ixx="[^"]+"', 'ixx="-1.0"', urdf, count=2))
    first_joint = re.search(r'<joint name="([^"]+)"[^>]*>.*?<parent link="([^"]+)"/>\s*<child link="([^"]+)"/>', urdf, re.S)
    if first_joint:
        parent, child = first_joint.group(2), first_joint.group(3)
        cyc = urdf.replace("</robot>", f'<joint name="loop" type="fixed"><parent link="{child}"/><child link="{parent}"/></joint></robot>')
        urdf_case("cycle", cyc)
    for taken in ("universe", "base_x", "base_pitch"):
        first = re.search(r'<joint name="([^"]+)"', urdf).group(1)
        urdf_case(f"joint-named-{taken}", urdf.replace(f'"{first}"', f'"{taken}"'))
    urdf_case("missing-link", urdf.replace("</robot>", '<joint name="j9" type="fixed"><parent link="nowhere"/><child link="nothing"/></joint></robot>'))
    urdf_case("xml-bomb", '<?xml version="1.0"?><!DOCTYPE r [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;">'
              '<!ENTITY c "&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;"><!ENTITY d "&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;">]><robot name="&d;"/>')
    add("urdf-file-missing", {"plan.json": base["plan.json"], "spatial-leg.toml": stoml.encode()}, _check("plan.json", "spatial-leg.toml"))
    # --- command-line misuse (good files)
    good = {"plan.json": base["plan.json"]}
    for opt, val in (("--rate", "0"), ("--rate", "-5"), ("--rate", "nan"), ("--rate", "abc"), ("--rate", "1e9"),
                     ("--rate", "inf"), ("--duration", "0"), ("--duration", "1e300"), ("--duration", "-1"),
                     ("--margin", "1.5"), ("--margin", "-0.1"), ("--friction", "0"), ("--friction", "nan"),
                     ("--supply-power", "-1"), ("--regen-energy", "nan"), ("--max-flight-pitch", "0"),
                     ("--min-clearance", "-1"), ("--gait", "hopscotch"), ("--gait", "alternating:middle")):
        add(f"cli-check{opt}={val}", good, ["check", "{dir}/plan.json", "--robot", ROBOT, "--quiet",
                                            "-o", "{dir}/out/review.json", f"{opt}={val}"])
    for argv in (["check"], ["check", "{dir}/plan.json"], ["check", "{dir}/nope.json", "--robot", ROBOT],
                 ["check", "{dir}/plan.json", "--robot", "nope-robot"], ["check", "{dir}/plan.json", "--robot", ROBOT, "--bogus"],
                 ["frobnicate"], ["check", "{dir}/plan.json", "--robot", ROBOT, "-o", "{dir}/missing/dir/r.json"],
                 ["check", "{dir}/plan.json", "--robot", ROBOT, "-o", "{dir}"],
                 ["check", "{dir}/plan.json", "--robot", ROBOT, "--modified-targets", "{dir}/out/plain.csv"],
                 ["check", "{dir}/plan.json", "--robot", ROBOT, "-o", "{dir}/plan.json", "--force"],
                 ["translate", "{dir}/plan.json", "--robot", ROBOT, "-o", "{dir}/out/t.xlsx"],
                 ["translate", "{dir}/plan.json", "--robot", ROBOT, "-o", "{dir}/out/t.csv", "--case", "nope"],
                 ["translate", "{dir}/plan.json", "--robot", ROBOT, "-o", "{dir}/out/t.csv", "--rate", "-1"],
                 ["sweep", "{dir}/plan.json", "--robot", ROBOT, "--ground-offsets", "0:0.1:0", "--csv", "{dir}/out/s.csv"],
                 ["sweep", "{dir}/plan.json", "--robot", ROBOT, "--ground-offsets", "0:0.1:1000000000", "--csv", "{dir}/out/s.csv"],
                 ["sweep", "{dir}/plan.json", "--robot", ROBOT, "--ground-offsets", "a:b:c", "--csv", "{dir}/out/s.csv"],
                 ["sweep", "{dir}/plan.json", "--robot", ROBOT, "--jobs", "0", "--csv", "{dir}/out/s.csv"],
                 ["review", "{dir}/plan.json", "--robot", ROBOT, "-o", "{dir}/out", "--sweep=0:0.1:0"],
                 ["review", "{dir}/plan.json", "--demo", "-o", "{dir}/out"],
                 ["review", "{dir}/plan.json", "-o", "{dir}/out"],
                 ["robot", "show", "nope-robot"], ["robot", "show", "{dir}/plan.json"]):
        add("cli-" + " ".join(a.replace("{dir}/", "").replace("/", "_") for a in argv), good, argv)
    # --- sweeps: the plan's model and policy
    demo = json.loads(base["demo.json"])

    def sweep_case(name, mutate):
        doc = json.loads(base["demo.json"])
        mutate(doc)
        add(f"sweep-{name}", {"p.json": json.dumps(doc, allow_nan=True).encode()},
            ["sweep", "{dir}/p.json", "--robot", ROBOT, "--quiet", "--rate", "200", "--ground-offsets", "-0.01:0.01:3",
             "--jobs", "1", "--csv", "{dir}/out/s.csv"])
    sweep_case("no-policy", lambda d: d.pop("policy", None))
    sweep_case("no-model", lambda d: d.pop("model", None))
    if isinstance(demo.get("policy"), dict):
        for key in list(demo["policy"]):
            sweep_case(f"policy-{key}-nan", lambda d, key=key: d["policy"][key].__setitem__(0, float("nan")))
            sweep_case(f"policy-{key}-string", lambda d, key=key: d["policy"].__setitem__(key, "fast"))
            sweep_case(f"policy-{key}-empty", lambda d, key=key: d["policy"].__setitem__(key, []))
    if isinstance(demo.get("model"), dict):
        for key in list(demo["model"])[:6]:
            sweep_case(f"model-{key}-negative", lambda d, key=key: d["model"].__setitem__(key, -1.0))
            sweep_case(f"model-{key}-huge", lambda d, key=key: d["model"].__setitem__(key, 1e300))
    return out


def _mat_with(variables: dict) -> bytes:
    import scipy.io

    buf = io.BytesIO()
    scipy.io.savemat(buf, variables)
    return buf.getvalue()
