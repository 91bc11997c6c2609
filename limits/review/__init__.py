"""One review of a plan on a robot, and everything rendered from it.

    build_review(plan, robot, settings) -> Review       read, translate, check, sweep (nothing written)
    run_review(plan, robot, settings, out_dir) -> ReviewRun   build_review, then every output written
    review_to_json(review) -> dict                      the JSON document (json_doc)
    render_report(review) -> str                        the HTML report (report/)
    review_lines(review) -> list[str]                   the terminal summary (text)
    write_corrected_targets(review, path)               the nearest feasible motion, marked MODIFIED
"""

from legbridge.robots.lazy import lazy_exports

_WHERE = {
    "Review": "review", "SWEEP_AUTO": "review", "assemble_review": "review", "build_review": "review",
    "ReviewRun": "run", "run_review": "run", "run_demo_review": "run", "write_review": "run",
    "review_to_json": "json_doc", "write_json": "json_doc", "render_report": "report", "write_report": "report",
    "review_lines": "text", "write_corrected_targets": "corrected_targets",
}

__all__ = sorted(_WHERE)
__getattr__, __dir__ = lazy_exports(__name__, _WHERE)
