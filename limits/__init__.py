"""Whether a plan stays within the modelled limits: checks, QPs, segments, cautions, reports, CLI.

Public API (loaded on first use, so the command line starts quickly):

    check_case(traj, robot, settings=None) -> CaseReview             (limits.check)
    check_plan(trajs, robot, settings=None) -> tuple[CaseReview, ...]
    rank_cases(reviews) -> tuple[CaseRank, ...]                       worst first
    review_to_json(reviews, plan, robot, settings) -> dict            (limits.review_json)
    run_review(plan, robot, settings, out_dir, *, force=False) -> ReviewOutcome   (limits.review)
    CheckSettings, CaseReview, LimitSegment, LimitTrace, QPSolution   (limits.results)
    CAUTIONS, caution_lines()                                         (limits.cautions)
"""

from importlib import import_module

_WHERE = {
    "check_case": "check", "check_plan": "check", "rank_cases": "check",
    "review_to_json": "review_json", "write_json": "review_json",
    "run_review": "review", "run_demo_review": "review", "ReviewOutcome": "review",
    "CheckSettings": "results", "CaseReview": "results", "LimitSegment": "results", "LimitTrace": "results",
    "QPSolution": "results", "SCHEMA_VERSION": "results",
    "CAUTIONS": "cautions", "caution_lines": "cautions",
}

__all__ = sorted(_WHERE)


def __getattr__(name):
    if name in _WHERE:
        return getattr(import_module(f"{__name__}.{_WHERE[name]}"), name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
