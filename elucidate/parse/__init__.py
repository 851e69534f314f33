"""parse: what the chemist typed -> a validated :class:`~elucidate.model.Problem`.

Formulas (:func:`parse_formula`), 1H and 13C peak lists as written in papers
(:func:`parse_h1`, :func:`parse_c13`), CSV/TSV tables, JCAMP-DX peak tables
and TOML case files (:func:`load_problem`).  Every bad input raises
:class:`elucidate.errors.InputError` naming the token and where it is.
"""

from elucidate.parse.case import (
    load_problem,
    problem_from_toml,
    read_peak_file,
    read_peak_text,
    validate_smarts,
)
from elucidate.parse.formula import MAX_HEAVY_ATOMS, parse_formula
from elucidate.parse.multiplicity import normalise_multiplicity
from elucidate.parse.peaks import parse_c13, parse_h1

__all__ = [
    "MAX_HEAVY_ATOMS",
    "load_problem",
    "normalise_multiplicity",
    "parse_c13",
    "parse_formula",
    "parse_h1",
    "problem_from_toml",
    "read_peak_file",
    "read_peak_text",
    "validate_smarts",
]
