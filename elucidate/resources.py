"""Where the package's data files are, installed or in a source checkout."""

from __future__ import annotations

from importlib import resources
from importlib.resources.abc import Traversable
from pathlib import Path

__all__ = ["fragments_root"]


def fragments_root() -> Traversable:
    """The fragment library: ``elucidate.fragments`` when installed, else the
    top-level ``fragments/`` folder of a source checkout."""
    try:
        return resources.files("elucidate.fragments")
    except ModuleNotFoundError:
        return Path(__file__).resolve().parent.parent / "fragments"
