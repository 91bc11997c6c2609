"""Whether a plan stays within the modelled limits: checks, QPs, verdicts, reviews, sweeps, command line.

Public API (loaded on first use, so the command line starts quickly):

    build_review(plan, robot, settings=None) -> Review           read, translate, check (limits.review)
    run_review(plan, robot, settings, out_dir) -> ReviewRun      the same, every output written
    check_case(traj, robot, settings=None) -> CaseReview         one translated case (limits.checks)
    check_plan(trajs, robot, settings=None) -> tuple[CaseReview, ...]
    review_to_json(review) -> dict; render_report(review) -> str; review_lines(review) -> list[str]
    run_sweep(plans, robots, offsets=None, ...) -> tuple[SweepResult, ...]   (limits.sweep)
    Verdict, CaseSummary, utilisation_text                       (limits.verdict)
    CheckSettings, CaseReview, LimitSegment, LimitTrace, QPSolution   (limits.checks.results)
    all_limits() -> tuple[Limit, ...]                            every modelled limit (limits.checks)
    CAUTIONS, caution_lines()                                    (limits.cautions)
    case_joints_figure(case_review, robot), case_force_figure(case_review, robot),
    torque_speed_figure(case_reviews, robot, joint), thermal_figure(case_reviews, robot, duration_s),
    figure_keys(review), plot_for(review, key)  -> matplotlib Figures  (limits.review.report.plots)
    run_after_test(review_dir, log, out_dir, mapping=None) -> AfterTestRun   (limits.aftertest)
    read_log, align_log, compare_log, identify_drive, identify_thermal, write_corrected_robot
"""

from legbridge.robots.lazy import lazy_exports

_WHERE = {
    "build_review": "review", "run_review": "review", "run_demo_review": "review", "Review": "review",
    "ReviewRun": "review", "review_to_json": "review", "render_report": "review", "review_lines": "review",
    "write_corrected_targets": "review",
    "check_case": "checks", "check_plan": "checks", "all_limits": "checks", "Limit": "checks",
    "run_sweep": "sweep", "SweepResult": "sweep",
    "Verdict": "verdict", "CaseSummary": "verdict", "utilisation_text": "verdict",
    "CheckSettings": "checks.results", "CaseReview": "checks.results", "LimitSegment": "checks.results",
    "LimitTrace": "checks.results", "QPSolution": "checks.results",
    "CAUTIONS": "cautions", "caution_lines": "cautions",
    "case_joints_figure": "review.report.plots", "case_force_figure": "review.report.plots",
    "torque_speed_figure": "review.report.plots", "thermal_figure": "review.report.plots",
    "figure_keys": "review.report.plots", "plot_for": "review.report.plots",
    "run_after_test": "aftertest.run", "compare_log": "aftertest.compare", "read_log": "aftertest.log_reader",
    "align_log": "aftertest.align", "identify_drive": "aftertest.identify", "identify_thermal": "aftertest.identify",
    "write_corrected_robot": "aftertest.robot_file",
}

__all__ = sorted(_WHERE)
__getattr__, __dir__ = lazy_exports(__name__, _WHERE)
