"""Multiplicity labels as chemists write them -> the normalised vocabulary.

Normalised multiplicities are ``s d t q quint sext sept m`` and compounds of
``d t q`` (``dd``, ``dt``, ``td``, ``ddd``, ``dq``, ``tt`` …), as in
:class:`elucidate.model.H1Signal`.  "Broad" and "apparent" are flags beside it.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

__all__ = ["Multiplicity", "normalise_multiplicity"]


@dataclass(frozen=True)
class Multiplicity:
    """A read multiplicity label.

    ``label`` is ``""`` when only a flag was given (``br`` or ``app`` alone);
    ``note`` explains a label that was coarsened to ``m`` (e.g. ``nonet``).
    """

    label: str
    broad: bool = False
    apparent: bool = False
    note: str | None = None


# Common practice (journal author guidelines; see shared trade facts).
_WORDS = {
    "s": "s", "singlet": "s", "sing": "s",
    "d": "d", "doublet": "d", "doublets": "d",
    "t": "t", "triplet": "t", "triplets": "t", "tr": "t",
    "q": "q", "quartet": "q", "quartets": "q", "quart": "q",
    "p": "quint", "quint": "quint", "quin": "quint", "quintet": "quint", "pent": "quint",
    "pentet": "quint", "pentuplet": "quint",
    "sext": "sext", "sxt": "sext", "sex": "sext", "sextet": "sext", "hex": "sext",
    "hextet": "sext", "sx": "sext",
    "sept": "sept", "sep": "sept", "septet": "sept", "hept": "sept", "heptet": "sept",
    "m": "m", "mult": "m", "multiplet": "m", "mc": "m", "m_c": "m", "cm": "m",
}
# Patterns with no first-order reading in our vocabulary: read as m, with a note.
_COARSE = {
    "oct": "octet", "octet": "octet", "non": "nonet", "nonet": "nonet",
    "abq": "AB quartet", "ab": "AB system", "abx": "ABX system", "aa'bb'": "AA'BB' system",
    "aa′bb′": "AA'BB' system", "aabb": "AA'BB' system", "ab q": "AB quartet",
    "ovl": "overlapping signals", "overlapping": "overlapping signals",
    "envelope": "envelope",
}
_COMPOUND = re.compile(r"[dtq]{2,6}")
_COMPOUND_P = re.compile(r"[dtqp]{2,6}")
_OF_LETTER = {"d": "d", "t": "t", "q": "q"}


def normalise_multiplicity(token: str) -> Multiplicity | None:
    """Read one multiplicity label; ``None`` if it is not one.

    Parameters
    ----------
    token : str
        E.g. ``"dd"``, ``"br s"``, ``"brs"``, ``"app t"``, ``"hept"``,
        ``"doublet of triplets"``, ``"br"``.

    Returns
    -------
    Multiplicity or None

    Examples
    --------
    >>> normalise_multiplicity("br s")
    Multiplicity(label='s', broad=True, apparent=False, note=None)
    >>> normalise_multiplicity("hept").label
    'sept'
    >>> normalise_multiplicity("xyz") is None
    True
    """
    t = token.strip().lower().replace(".", " ").replace("-", " ").replace("(", " ").replace(")", " ")
    t = " ".join(t.split())
    if not t or len(t) > 60:
        return None
    broad = apparent = False
    words = t.split(" ")
    # flags as separate words, before or after the label
    kept = []
    for w in words:
        if w in ("br", "broad"):
            broad = True
        elif w in ("app", "apparent", "ps", "pseudo", "apparently"):
            apparent = True
        else:
            kept.append(w)
    core = " ".join(kept)
    # glued broad prefix: brs, bs, brd, bt, bm, brdd ...
    m = re.fullmatch(r"(?:br|b)([sdtqm]|[dtq]{2,6})", core)
    if m:
        broad = True
        core = m.group(1)
    m = re.fullmatch(r"app([dtq]{1,6}|quint|sext|sept|p)", core)
    if m:
        apparent = True
        core = m.group(1)
    if not core:
        if broad or apparent:
            return Multiplicity("", broad, apparent)
        return None
    label = _core(core)
    if label is not None:
        return Multiplicity(label, broad, apparent)
    if core in _COARSE:
        return Multiplicity("m", broad, apparent, note=f"'{token.strip()}' ({_COARSE[core]}) read as m")
    if _COMPOUND_P.fullmatch(core):
        return Multiplicity(
            "m", broad, apparent, note=f"'{token.strip()}' (a compound with a quintet) read as m"
        )
    return None


def _core(core: str) -> str | None:
    if core in _WORDS:
        return _WORDS[core]
    if _COMPOUND.fullmatch(core):
        return core
    # "doublet of doublets (of doublets)", "triplet of doublets", "dd of d"
    parts = re.split(r"\s+of\s+", core)
    if len(parts) > 1:
        letters = []
        for part in parts:
            label = _WORDS.get(part, part if _COMPOUND.fullmatch(part) else None)
            if label is None or not all(ch in _OF_LETTER for ch in label):
                return None
            letters.append(label)
        return "".join(letters)
    # "d d" written with a space
    if all(w in _OF_LETTER for w in core.split()):
        return "".join(core.split())
    return None
