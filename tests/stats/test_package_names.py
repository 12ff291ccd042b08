"""The statistics package's public names load on first use, and are what they always were.

``steadyline.stats`` imports its modules only when one of its names is first asked for, so
that the light modules may take the codes (``stats.codes``) without loading numpy and every
statistic. Four functions are named like their modules (capability, capability_change, compare,
pareto); the package's attribute must stay the function whichever is imported first.
"""

from __future__ import annotations

import subprocess
import sys
import types

import steadyline.stats as stats

SHADOWED = ("capability", "capability_change", "compare", "pareto")


def test_every_public_name_resolves_to_its_object():
    for name in stats.__all__:
        value = getattr(stats, name)
        assert not isinstance(value, types.ModuleType), name
    assert set(stats.__all__) <= set(dir(stats))
    # the names listed for the type checker, those loaded on first use and those handed on
    # are one list
    assert set(stats._HOME) == set(stats.__all__)


def test_a_function_named_like_its_module_stays_the_function():
    # a fresh interpreter: each submodule imported first, then the package's name asked for
    code = (
        "import importlib, types, sys\n"
        f"for name in {SHADOWED!r}:\n"
        "    importlib.import_module('steadyline.stats.' + name)\n"
        "import steadyline.stats as s\n"
        "from steadyline.stats import capability, compare\n"
        f"print([isinstance(getattr(s, n), types.FunctionType) for n in {SHADOWED!r}],"
        " callable(capability), callable(compare))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[True, True, True, True] True True"


def test_the_codes_load_no_statistics():
    code = (
        "import sys, steadyline.stats.codes\n"
        "print(sorted(m for m in sys.modules if m.startswith(('numpy', 'steadyline.stats'))))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "['steadyline.stats', 'steadyline.stats.codes']"


def test_an_unknown_name_is_an_attribute_error():
    try:
        stats.no_such_statistic  # noqa: B018
    except AttributeError as e:
        assert "no_such_statistic" in str(e)
    else:
        raise AssertionError("an unknown name must raise AttributeError")
