"""Test-suite set-up: the helper modules beside the tests (seeded data
generators) import by name whichever files pytest is asked to run."""

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))


def pytest_addoption(parser):
    parser.addoption("--runslow", action="store_true", default=False,
                     help="also run the tests marked slow (before a release)")


def pytest_configure(config):
    """``slow``: tests that take tens of seconds each (mpmath integrals, 10^6-draw
    simulations, killed and concurrent processes, whole validation reports). The
    default run (the README's test command) skips them to stay within a few
    minutes; ``--runslow`` (or ``LOTWISE_SLOW=1``) runs them too."""
    config.addinivalue_line("markers", "slow: takes tens of seconds (run with --runslow)")


def pytest_collection_modifyitems(config, items):
    import os

    import pytest

    if config.getoption("--runslow") or os.environ.get("LOTWISE_SLOW") == "1":
        return
    skip = pytest.mark.skip(reason="slow: run with --runslow (or LOTWISE_SLOW=1)")
    for item in items:
        if "slow" in item.keywords:
            item.add_marker(skip)
