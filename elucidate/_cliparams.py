"""Command-line values converted without importing pydantic.

Recent typer releases convert every command-line value (even an absent one)
through a pydantic ``TypeAdapter``; importing pydantic costs about a tenth of
a second, more than the rest of ``elucidate read``.  :func:`install` gives
typer a converter for the plain value types our commands use (``str``,
``bool``, ``int``, ``float``, ``Path``, ``list[str]``) that handles the
ordinary, valid values itself and hands anything else (an out-of-range
number, a malformed one, an unusual type) to typer's own converter, so error
messages and every unusual case are exactly typer's.

It relies on typer's private ``typer.core._TyperParameter.get_runtime_param``
and ``typer._coercion.RuntimeParam``; when a typer release lacks them (older
releases do not use pydantic at all) :func:`install` does nothing and typer
works as shipped.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, get_args, get_origin

__all__ = ["install"]

_INT = re.compile(r"[+-]?[0-9]+\Z")
_FLOAT = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?\Z")

#: Set once :func:`install` has patched typer (False: typer left as shipped).
INSTALLED = False


class _Fallback(Exception):
    """The value is not a plain valid one: typer's converter decides."""


def _leaf(annotation: Any, info: Any, value: Any, param: Any, ctx: Any, coerce_path: Any) -> Any:
    if annotation is str:
        if isinstance(value, str):
            return value
    elif annotation is bool:
        if isinstance(value, bool):
            return value
    elif annotation is int or annotation is float:
        if isinstance(value, bool):
            raise _Fallback
        if isinstance(value, str):
            if not (_INT if annotation is int else _FLOAT).match(value):
                raise _Fallback
            number = annotation(value)
        elif isinstance(value, int) or (annotation is float and isinstance(value, float)):
            number = annotation(value)
        else:
            raise _Fallback
        if info.clamp or (info.min is not None and number < info.min) or (info.max is not None and number > info.max):
            raise _Fallback
        return number
    elif isinstance(annotation, type) and issubclass(annotation, Path) and info.path_type is None:
        if isinstance(value, str) and value:
            value = annotation(value)
        if isinstance(value, annotation):
            return coerce_path(value, info, path_type=annotation, param=param, ctx=ctx)
    raise _Fallback


def install() -> bool:
    """Give typer the pydantic-free converter for plain values (once).

    Returns
    -------
    bool
        True if typer now uses it, False if this typer release has no place
        for it (typer is then left as it is).
    """
    global INSTALLED
    if INSTALLED:
        return True
    try:
        from typer import _coercion, _param_types, core
    except ImportError:
        return False
    base = getattr(core, "_TyperParameter", None)
    runtime = getattr(_coercion, "RuntimeParam", None)
    build = getattr(_coercion, "build_runtime_param", None)
    coerce_path = getattr(_param_types, "coerce_cli_path", None)
    if base is None or runtime is None or build is None or coerce_path is None or not hasattr(base, "get_runtime_param"):
        return False

    @dataclass(frozen=True)
    class _Light(runtime):  # type: ignore[misc, valid-type]
        descriptor: Any = None
        full: list = field(default_factory=list)

        def _typer_param(self) -> Any:
            if not self.full:
                self.full.append(build(self.descriptor))
            return self.full[0]

        def _coerce_value(self, value: Any, param: Any, ctx: Any) -> Any:
            annotation, info = self.annotation, self.parameter_info
            try:
                if info.parser is not None:
                    raise _Fallback
                if get_origin(annotation) is list:
                    if get_args(annotation) != (str,) or not isinstance(value, (list, tuple)):
                        raise _Fallback
                    if not all(isinstance(v, str) for v in value):
                        raise _Fallback
                    return list(value)
                return _leaf(annotation, info, value, param, ctx, coerce_path)
            except _Fallback:
                return self._typer_param()._coerce_value(value, param=param, ctx=ctx)

    def get_runtime_param(self: Any) -> Any:
        if self._runtime_param is None:
            desc = self.type_descriptor
            if getattr(desc, "file_annotation", None) is not None:
                self._runtime_param = build(desc)
            else:
                self._runtime_param = _Light(desc.parameter_info, desc.annotation, desc)
        return self._runtime_param

    base.get_runtime_param = get_runtime_param
    INSTALLED = True
    return True
