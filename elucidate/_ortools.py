"""OR-Tools' CP-SAT module, imported without pandas.

``ortools.sat.python.cp_model`` imports pandas at the top for its optional
pandas-indexed helpers (``new_int_var_series`` and the like), which the
solver never uses; pandas is about a third of a second of ``elucidate
solve``'s start-up.  :func:`load_cp_model` imports the module with a
stand-in for pandas that holds just the classes the module names
(``pandas.Index``, ``pandas.Series``): ``isinstance`` against one asks the
real package when it has been imported (none of its objects can exist
before), calling one or asking the stand-in for any other name imports the
real package.  Only ``cp_model`` sees the stand-in: it leaves
``sys.modules`` once the import is done, so ``import pandas`` anywhere else
gets the real package.

If an OR-Tools release needs more at import time, the import with
stand-ins fails and the module is imported the ordinary way.
"""

from __future__ import annotations

import importlib
import sys
import types
from typing import Any

__all__ = ["load_cp_model"]

_NAME = "ortools.sat.python.cp_model"


def _real(name: str) -> Any:
    """The real package (the stand-in leaves ``sys.modules`` first)."""
    if isinstance(sys.modules.get(name), _StandIn):
        del sys.modules[name]
    return importlib.import_module(name)


class _Deferred(type):
    """Metaclass of the stand-in classes: defer to the real package's class."""

    def __instancecheck__(cls, obj: Any) -> bool:
        real = sys.modules.get(cls.__module__)
        if real is None or isinstance(real, _StandIn):
            return False  # the package was never imported: none of its objects exist
        return isinstance(obj, getattr(real, cls.__name__))

    def __subclasscheck__(cls, other: type) -> bool:
        real = sys.modules.get(cls.__module__)
        if real is None or isinstance(real, _StandIn):
            return other is cls
        return issubclass(other, getattr(real, cls.__name__))

    def __call__(cls, *args: Any, **kwargs: Any) -> Any:
        return getattr(_real(cls.__module__), cls.__name__)(*args, **kwargs)


class _StandIn(types.ModuleType):
    """A package that is imported only when a name other than its listed
    classes is asked for."""

    def __init__(self, name: str, classes: tuple[str, ...]) -> None:
        super().__init__(name, f"stand-in for {name} while importing OR-Tools' cp_model (elucidate._ortools)")
        for cls in classes:
            setattr(self, cls, _Deferred(cls, (), {"__module__": name}))

    def __getattr__(self, name: str) -> Any:
        if name.startswith("__"):
            raise AttributeError(name)
        return getattr(_real(self.__name__), name)


#: The names cp_model uses from each package when it is imported.  (numpy
#: is not among them: the compiled helper imports it when the first model is
#: made, so a stand-in would not save its import.)
_STAND_INS = {
    "pandas": ("Index", "Series"),
}


def load_cp_model() -> Any:
    """``ortools.sat.python.cp_model``, imported once, without pandas if possible.

    Returns
    -------
    module
        The CP-SAT module; later ``from ortools.sat.python import cp_model``
        statements get the same module object.
    """
    done = sys.modules.get(_NAME)
    if done is not None:
        return done
    placed = [name for name in _STAND_INS if name not in sys.modules]
    for name in placed:
        sys.modules[name] = _StandIn(name, _STAND_INS[name])
    try:
        from ortools.sat.python import cp_model
    except ImportError:
        sys.modules.pop(_NAME, None)
        _remove(placed)
        from ortools.sat.python import cp_model
    finally:
        _remove(placed)
    return cp_model


def _remove(names: list[str]) -> None:
    for name in names:
        if isinstance(sys.modules.get(name), _StandIn):
            del sys.modules[name]
