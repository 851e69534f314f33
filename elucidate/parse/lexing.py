"""Lexical pieces shared by the peak-list readers: numbers, shifts, J lists, labels.

Every reader (text, CSV/TSV, JCAMP-DX, TOML inline peaks) reads numbers,
shift ranges and coupling lists the same way and reports a bad token with
the same kind of message, naming where it is.
"""

from __future__ import annotations

import math
import re
from typing import Callable

from elucidate.errors import InputError

__all__ = [
    "MAX_J_HZ",
    "NUMBER",
    "NUMBER_RE",
    "NUMBER_EXP_RE",
    "J_START_RE",
    "RANGE_SEP_RE",
    "DEPT_LABELS",
    "OFF_RESONANCE_H",
    "to_float",
    "read_shift",
    "read_couplings",
    "short",
]

#: Largest coupling constant accepted (Hz; geminal H–F couplings reach ~50 Hz).
MAX_J_HZ = 100.0

NUMBER = r"[+\-−]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)"
NUMBER_RE = re.compile(NUMBER)
NUMBER_EXP_RE = re.compile(NUMBER + r"(?:[eE][+\-]?[0-9]+)?")
RANGE_SEP_RE = re.compile(r"\s*(?:–|—|‒|-|−|to\b)\s*")
J_START_RE = re.compile(
    r"(?:[0-9]\s*)?J(?P<sub>[^=:0-9\s]{0,12})\s*(?:[0-9](?=\s*[=:]))?\s*[=:≈~]?\s*(?P<rest>.*)", re.DOTALL
)


#: DEPT / attached-H labels of 13C signals -> number of attached H (common practice).
DEPT_LABELS = {
    "ch3": 3, "ch2": 2, "ch": 1, "c": 0, "cq": 0, "c_q": 0, "qc": 0, "quat": 0, "quaternary": 0,
    "cquat": 0, "c quat": 0, "ch₃": 3, "ch₂": 2, "c-q": 0, "quat.": 0, "quat c": 0, "quat. c": 0,
    "quaternary c": 0,
}
#: Off-resonance decoupled 13C multiplicities s/d/t/q -> attached H (common practice).
OFF_RESONANCE_H = {"s": 0, "d": 1, "t": 2, "q": 3}


def to_float(token: str, what: str, where: str) -> float:
    """A finite float from text (``−`` accepted as minus), else InputError naming it."""
    t = token.strip().replace("−", "-")
    if not NUMBER_EXP_RE.fullmatch(t):
        raise InputError(f"{what} '{short(token)}' at {where} is not a number")
    value = float(t)
    if not math.isfinite(value):
        raise InputError(f"{what} '{short(token)}' at {where} is not a finite number")
    return value


def read_shift(chunk: str, pos: int, what: str) -> tuple[float, float, int]:
    """Read ``[δ] [~|ca.] shift [– shift] [ppm]`` at the start of ``chunk``.

    Parameters
    ----------
    chunk : str
        Text starting with the shift.
    pos : int
        Offset of ``chunk`` in the text the user gave (for positions in messages).
    what : str
        What is being read, for messages (``"1H list"``, ``"x.csv line 3"``).

    Returns
    -------
    low_or_first, other_end, end : float, float, int
        The two ends (equal for a single shift) and the index after the shift.
    """
    i = 0
    d = re.match(r"(?:δ|delta)\s*[HC]?\s*[=:]?\s*", chunk, re.IGNORECASE)
    if d:
        i = d.end()
    about = re.match(r"(?:~|≈|ca\.?|approx\.?|c\.)\s*", chunk[i:], re.IGNORECASE)
    if about:
        i += about.end()
    m = NUMBER_RE.match(chunk, i)
    if m is None:
        token = _token(chunk[i:]) or chunk[i : i + 1]
        raise InputError(f"{what}: '{short(token)}' at position {pos + i + 1} is not a chemical shift")
    after = m.end()
    if after < len(chunk) and (chunk[after].isalpha() and chunk[after] not in "p" or chunk[after] in "eE"):
        token = _token(chunk[i:])
        raise InputError(f"{what}: '{short(token)}' at position {pos + i + 1} is not a chemical shift")
    a = to_float(m.group(0), f"{what}: shift", f"position {pos + i + 1}")
    b = a
    i = m.end()
    sep = RANGE_SEP_RE.match(chunk, i)
    if sep and sep.end() > i:
        m2 = NUMBER_RE.match(chunk, sep.end())
        if m2 is None:
            token = _token(chunk[sep.end() :]) or chunk[sep.start() : sep.end()]
            raise InputError(
                f"{what}: '{short(token)}' at position {pos + sep.end() + 1} is not the other end "
                "of a shift range"
            )
        b = to_float(m2.group(0), f"{what}: shift", f"position {pos + sep.end() + 1}")
        i = m2.end()
    p = re.match(r"\s*ppm\b", chunk[i:], re.IGNORECASE)
    if p:
        i += p.end()
    return a, b, i


def read_couplings(
    rest: str, pos: int, locate: Callable[[int], str] | None = None
) -> tuple[list[float], bool]:
    """Numbers of a J list (``7.9, 1.7 Hz``, ``7.9 and 1.7``, ``7.9/1.7``); closed by Hz.

    ``locate(i)`` names the place of character ``i`` of ``rest`` in messages;
    by default ``position pos + i + 1`` of the 1H text.
    """
    if locate is None:
        def locate(i: int) -> str:
            return f"position {pos + i + 1} of the 1H list"

    values: list[float] = []
    closed = False
    i = 0
    n = len(rest)
    while i < n:
        if rest[i].isspace() or rest[i] in ",/&":
            i += 1
            continue
        if rest.startswith("and", i) and (i + 3 == n or not rest[i + 3].isalpha()):
            i += 3
            continue
        hz = re.match(r"Hz\b\.?", rest[i:], re.IGNORECASE)
        if hz:
            closed = True
            i += hz.end()
            continue
        m = NUMBER_EXP_RE.match(rest, i)
        if m is None or closed:
            token = re.match(r"\S*", rest[i:]).group(0)  # type: ignore[union-attr]
            raise InputError(f"'{short(token)}' at {locate(i)} is not a coupling constant")
        value = abs(to_float(m.group(0), "J", locate(i)))
        if not 0 < value <= MAX_J_HZ:
            raise InputError(
                f"J '{m.group(0)}' at {locate(i)} is not a coupling constant (0 < J ≤ {MAX_J_HZ:g} Hz)"
            )
        values.append(value)
        i = m.end()
    return values, closed


_TOKEN = re.compile(r"[^\s(,;]*")


def _token(text: str) -> str:
    """The word at the start of ``text`` (up to a space, bracket, comma or semicolon)."""
    m = _TOKEN.match(text)
    return m.group(0) if m else ""


def short(token: str, limit: int = 30) -> str:
    token = " ".join(token.split())
    return token if len(token) <= limit else token[: limit - 1] + "…"

