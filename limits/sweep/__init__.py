"""Disturbance sweeps: a plan's open-loop policy re-simulated on many ground heights, each offset
translated and checked like the plan's own cases.

    run_sweep(plans, robots, offsets=None, ...) -> tuple[SweepResult, ...]   (runner)
    SweepResult, OffsetResult, SweepWindow, parse_offsets, default_offsets   (model)
    to_csv_text, to_json_doc, write_csv, write_json                          (table)
    plot_sweep(result) -> matplotlib Figure                                  (plot)
"""

from legbridge.robots.lazy import lazy_exports

_WHERE = {
    "run_sweep": "runner", "run_tasks": "runner", "run_offset": "runner", "check_jobs": "runner",
    "SweepResult": "model", "OffsetResult": "model", "SweepWindow": "model", "OffsetTask": "model",
    "parse_offsets": "model", "default_offsets": "model", "offsets_between": "model", "NOT_CHECKED": "model",
    "to_csv_text": "table", "to_json_doc": "table", "write_csv": "table", "write_json": "table",
    "plot_sweep": "plot",
}

__all__ = sorted(_WHERE)
__getattr__, __dir__ = lazy_exports(__name__, _WHERE)
