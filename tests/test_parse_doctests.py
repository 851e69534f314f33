"""The examples in the parse modules' docstrings run and hold."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = [
    "elucidate.parse.formula",
    "elucidate.parse.multiplicity",
    "elucidate.parse.peaks",
    "elucidate.parse.solvents",
    "elucidate.parse.tables",
    "elucidate.parse.jcamp",
]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name: str) -> None:
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS)
    assert result.failed == 0
