"""Test-suite set-up: the helper modules beside the tests (seeded data
generators) import by name whichever files pytest is asked to run."""

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))


def pytest_configure(config):
    """``slow``: tests that take tens of seconds (mpmath integrals, 10^6-draw
    simulations); they run by default, ``-m "not slow"`` skips them."""
    config.addinivalue_line("markers", "slow: takes tens of seconds (mpmath, big simulations)")
