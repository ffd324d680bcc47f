"""The worked examples in the docstrings of the records, supplier, batch and
validation modules run as written."""

from __future__ import annotations

import doctest
import importlib

import pytest


@pytest.mark.parametrize("name", ["lotwise.data.csvio", "lotwise.data.records", "lotwise.analysis.supplier",
                                  "lotwise.data.batch", "lotwise.documents.plots.charts", "lotwise.validation.runner"])
def test_docstring_examples(name):
    mod = importlib.import_module(name)
    failed, tried = doctest.testmod(mod, optionflags=doctest.ELLIPSIS)
    assert tried > 0 and failed == 0
