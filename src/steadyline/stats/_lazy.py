"""scipy loaded on first use: importing scipy.stats costs most of a second, and a rebuild that
has little to compute (or nothing to test) should not pay it up front."""

from __future__ import annotations

import importlib
from types import ModuleType


class LazyModule:
    """Stands in for a module and imports it at the first attribute looked up."""

    def __init__(self, name: str):
        self._name = name
        self._module: ModuleType | None = None

    def __getattr__(self, attr: str):
        if self._module is None:
            self._module = importlib.import_module(self._name)
        value = getattr(self._module, attr)
        setattr(self, attr, value)  # later look-ups skip this method
        return value


def lazy(name: str) -> LazyModule:
    return LazyModule(name)
