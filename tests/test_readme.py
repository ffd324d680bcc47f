"""The README's Python API example runs as a doctest.

The numbers in it are checked independently in tests/test_api.py against
scipy.stats (binomial and hypergeometric acceptance probabilities).
"""

from __future__ import annotations

import doctest
from pathlib import Path

README = Path(__file__).resolve().parents[1] / "README.md"


def test_readme_python_example_runs():
    result = doctest.testfile(str(README), module_relative=False,
                              optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert result.attempted >= 5
    assert result.failed == 0
