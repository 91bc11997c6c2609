"""Shared fixtures. Subfolders keep their own conftest.py for fixtures only they use."""

import pytest

from legbridge.robots import build_leg_model, load_robot
from legbridge.robots.library import library_path


@pytest.fixture(scope="session")
def example_robot():
    """The two-joint example leg from the foundation issue (invented values)."""
    return load_robot(library_path("example-leg.toml"))


@pytest.fixture(scope="session")
def example_leg_model(example_robot):
    return build_leg_model(example_robot)


# Property-based tests draw the same examples on every run (common practice for CI: a failure seen
# once is seen again); `--hypothesis-seed` or HYPOTHESIS_PROFILE=explore brings randomness back.
import os  # noqa: E402
import tempfile  # noqa: E402

from hypothesis import settings as _hyp_settings  # noqa: E402

# Nothing of Hypothesis's is written into the checkout: database=None keeps no example database,
# and Hypothesis's other caches (the charmap, and the constants it collects from local source files,
# written even with database=None) go to the folder HYPOTHESIS_STORAGE_DIRECTORY names, read when
# Hypothesis first touches its storage (i.e. after this runs); the default would be ./.hypothesis.
# A folder the caller set is kept.
_hyp_home = "legbridge-hypothesis" + (f"-{os.getuid()}" if hasattr(os, "getuid") else "")  # one per user
os.environ.setdefault("HYPOTHESIS_STORAGE_DIRECTORY", os.path.join(tempfile.gettempdir(), _hyp_home))
_hyp_settings.register_profile("ci", derandomize=True, deadline=None, print_blob=True, database=None)
_hyp_settings.register_profile("explore", deadline=None, database=None)
_hyp_settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
