"""Optional features: the extras that install their libraries, and the one way figspec imports
such a library, so a plain install names the missing extra instead of failing with a traceback.
Also :func:`deferred`, for a required library that only some commands use (pandas: the computed
tables need it, checking a spec does not)."""

from __future__ import annotations

import importlib
import importlib.util
import sys
from types import ModuleType

from figspec.errors import DataError, Loc, Problem

EXTRAS: dict[str, str] = {   # importable module -> the extra of pyproject.toml that installs it
    "pynwb": "nwb",
    "h5py": "nwb",
    "distributed": "cluster",
    "watchfiles": "preview",
    "pytest": "test",
}


def require(module: str, feature: str, loc: Loc = ()) -> ModuleType:
    """Import an optional library, or raise a user error naming the ``pip install`` command.

    Parameters
    ----------
    module : the library's import name (a key of :data:`EXTRAS`).
    feature : what needs it, for the message (e.g. ``"format = 'nwb'"``).
    loc : key path of the spec key that asked for the feature.
    """
    try:
        return importlib.import_module(module)
    except ImportError:
        extra = EXTRAS[module]
        raise DataError(Problem(f"{feature} needs the optional package {module.split('.')[0]!r}, which is not installed: "
                                f"pip install 'figspec[{extra}]'", loc)) from None


def deferred(module: str) -> ModuleType:
    """``module``, imported for real on the first use of one of its attributes (the recipe of
    the Python documentation, importlib.util.LazyLoader, "Implementing lazy imports"). A module
    already imported is returned as it is. For a library every install has (pandas), so that
    ``figspec check`` does not pay for importing it."""
    if module in sys.modules:
        return sys.modules[module]
    spec = importlib.util.find_spec(module)
    loader = importlib.util.LazyLoader(spec.loader)
    spec.loader = loader
    lazy = importlib.util.module_from_spec(spec)
    sys.modules[module] = lazy
    loader.exec_module(lazy)
    return lazy
