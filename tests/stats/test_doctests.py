"""The examples in the statistics modules' docstrings hold (they are part of the documentation)."""

from __future__ import annotations

import doctest
import importlib
import pkgutil

import pytest

import steadyline.stats

MODULES = sorted(
    m.name for m in pkgutil.walk_packages(steadyline.stats.__path__, "steadyline.stats.")
)


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS)
    assert result.failed == 0, f"{result.failed} of {result.attempted} examples failed in {name}"
