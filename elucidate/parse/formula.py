"""Molecular formulas: text in any element order -> :class:`~elucidate.model.Formula`.

The formula is read as a sequence of element symbols, each followed by an
optional whole-number count (``C9H10O2``, ``H10 C9 O2``, ``CH3COOCH2CH3``);
repeated symbols add up.  A formula that cannot be a neutral closed-shell
molecule (half-integer or negative degree of unsaturation) or is larger than
the solver attempts is refused with a message that says why.
"""

from __future__ import annotations

import re

from elucidate.errors import InputError
from elucidate.model import ELEMENTS, VALENCE, Formula

__all__ = ["MAX_HEAVY_ATOMS", "parse_formula", "max_h_for"]

#: Largest number of non-hydrogen atoms the solver attempts.
MAX_HEAVY_ATOMS = 30

# Longest element symbol first so that "Cl" is not read as "C" + "l".
_SYMBOL = re.compile(r"[A-Z][a-z]?")
_COUNT = re.compile(r"[0-9]+")
_MAX_COUNT_DIGITS = 4
_ORDER = {el: i for i, el in enumerate(ELEMENTS)}
_HALOGENS = ("F", "Cl", "Br", "I")


def parse_formula(text: str) -> Formula:
    """Read a molecular formula.

    Parameters
    ----------
    text : str
        Element symbols with optional counts, in any order, spaces allowed
        (``"C9H10O2"``, ``"C9 H10 O2"``, ``"O2C9H10"``).  Elements: C H N O S P
        Si F Cl Br I; at least one carbon.

    Returns
    -------
    Formula
        Element counts in Hill order.

    Raises
    ------
    InputError
        For an unknown symbol, a fractional or oversized count, a charge,
        a half-integer or negative degree of unsaturation (not a neutral
        closed-shell molecule), or more than :data:`MAX_HEAVY_ATOMS` heavy atoms.
        The message names the offending token and its (1-based) position.

    Examples
    --------
    >>> f = parse_formula("C9H10O2")
    >>> f.hill, f.dou
    ('C9H10O2', 5.0)
    >>> parse_formula("H10 O2 C9") == f
    True
    """
    if not isinstance(text, str):
        raise InputError(f"formula must be text, not {type(text).__name__}")
    return _parse_formula(text)


def max_h_for(formula: Formula) -> int:
    """Most H + halogen a neutral closed-shell molecule with these C, Si, N, P can carry.

    2(C + Si) + N + P + 2 (common practice; the DoU = 0 case).
    """
    return 2 * (formula["C"] + formula["Si"]) + formula["N"] + formula["P"] + 2


def _parse_formula(text: str) -> Formula:
    text = shown = text.strip()
    if not shown:
        raise InputError("formula is empty (expected e.g. C9H10O2)")
    counts: dict[str, int] = {}
    i = 0
    n = len(text)
    while i < n:
        ch = text[i]
        if ch.isspace():
            i += 1
            continue
        if ch in "+-−" or (ch == "^"):
            raise InputError(
                f"formula '{shown}': '{ch}' at position {i + 1}: charged formulas are not "
                "supported (give the neutral molecule)"
            )
        if ch in "()[]":
            raise InputError(
                f"formula '{shown}': '{ch}' at position {i + 1}: groups in brackets are not "
                "supported; write the element counts, e.g. C4H10O"
            )
        if ch == "." or ch == ",":
            tail = re.match(r"[.,][0-9]*", text[i:])
            token = tail.group(0) if tail else ch
            raise InputError(
                f"formula '{shown}': '{token}' at position {i + 1} is not an element count "
                "(counts are whole numbers)"
            )
        if ch in "0123456789":
            token = _COUNT.match(text, i).group(0)  # type: ignore[union-attr]
            raise InputError(
                f"formula '{shown}': count '{token}' at position {i + 1} does not follow an "
                "element symbol"
            )
        m = _SYMBOL.match(text, i)
        if m is None:
            token = re.match(r"\S+", text[i:]).group(0)  # type: ignore[union-attr]
            hint = " (element symbols start with a capital, e.g. C, Cl)" if ch.isalpha() else ""
            raise InputError(
                f"formula '{shown}': '{token[:12]}' at position {i + 1} is not an element "
                f"symbol{hint}"
            )
        symbol = m.group(0)
        if symbol not in VALENCE:
            raise InputError(
                f"formula '{shown}': unknown element '{symbol}' at position {i + 1} "
                f"(known: {' '.join(sorted(VALENCE, key=_ORDER.get))})"
            )
        j = m.end()
        c = _COUNT.match(text, j)
        if c is None:
            count = 1
        else:
            digits = c.group(0)
            if len(digits) > _MAX_COUNT_DIGITS:
                raise InputError(
                    f"formula '{shown}': count '{digits[:12]}' at position {j + 1} is far too "
                    f"large (at most {MAX_HEAVY_ATOMS} heavy atoms are attempted)"
                )
            count = int(digits)
            j = c.end()
        counts[symbol] = counts.get(symbol, 0) + count
        i = j
    return _validated(shown, counts)


def _validated(shown: str, counts: dict[str, int]) -> Formula:
    formula = Formula(
        tuple((el, counts[el]) for el in sorted(counts, key=_ORDER.__getitem__) if counts[el] > 0)
    )
    if formula["C"] == 0:
        raise InputError(f"formula '{shown}' has no carbon: elucidate handles organic compounds")
    heavy = formula.heavy_atoms
    if heavy > MAX_HEAVY_ATOMS:
        raise InputError(
            f"formula '{shown}' has {heavy} heavy (non-H) atoms; the solver attempts at most "
            f"{MAX_HEAVY_ATOMS}"
        )
    twice = formula.dou_twice
    if twice % 2:
        raise InputError(
            f"formula '{shown}' gives a half-integer degree of unsaturation "
            f"({twice / 2:g}): H + halogen + N + P is odd, so it is a radical or an ion, "
            "not a neutral closed-shell molecule"
        )
    if twice < 0:
        hx = formula["H"] + sum(formula[h] for h in _HALOGENS)
        raise InputError(
            f"formula '{shown}' gives a negative degree of unsaturation ({twice // 2}): "
            f"{hx} H + halogen is more than the {max_h_for(formula)} a neutral closed-shell "
            "molecule with these C, Si, N and P atoms can carry"
        )
    return formula
