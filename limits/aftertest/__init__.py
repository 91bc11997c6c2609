"""After the test: a hardware log held against the reviewed targets and limits, and a robot file
corrected from it (log reading, alignment, comparison, identification).

Public API (loaded on first use)::

    read_log(path, mapping=None, *, joints, legs) -> HardwareLog                 (log_reader)
    align_log(log, *, target_time_s, target_position, period_s) -> Alignment     (align)
    compare_log(log, reviewed_case, robot, settings) -> AfterTest                (compare)
    identify_drive(...) -> DriveFit; identify_thermal(...) -> ThermalFit         (identify)
    write_corrected_robot(robot_path, changes, ...) -> CorrectedRobot           (robot_file)
    run_after_test(review_dir, log, out_dir, mapping=None) -> AfterTestRun      (run)
"""

from legbridge.robots.lazy import lazy_exports

_WHERE = {
    "HardwareLog": "log", "Channel": "log", "read_log": "log_reader", "Alignment": "align", "align_log": "align",
    "joint_lags": "align", "AfterTest": "compare", "compare_log": "compare", "Estimate": "identify",
    "DriveFit": "identify", "ThermalFit": "identify", "identify_drive": "identify", "identify_thermal": "identify",
    "ParameterChange": "robot_file", "CorrectedRobot": "robot_file", "write_corrected_robot": "robot_file",
    "AfterTestRun": "run", "run_after_test": "run", "after_test_to_json": "document", "render_after_test": "report",
}

__all__ = sorted(_WHERE)
__getattr__, __dir__ = lazy_exports(__name__, _WHERE)
