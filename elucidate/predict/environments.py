"""H environments: sites (H on one heavy atom that share a shift), their
topological symmetry classes, alkene geometry and diastereotopic CH2.

Symmetry classes are RDKit canonical ranks computed without tie-breaking
(``CanonicalRankAtoms(breakTies=False)``): atoms with equal rank are
topologically equivalent.  An alkene ``=CH2`` whose partner carbon carries
two different groups holds two different H (cis and trans to a group), so it
gives two sites; all other H on one atom share one site.
"""

from __future__ import annotations

from typing import Any

from elucidate.predict.graph import MolGraph, substituent
from elucidate.predict.increments import NAMES, Site

__all__ = ["ranks", "sites", "diastereotopic", "stereocentres"]


def ranks(mol: Any) -> list[int]:
    """Canonical ranks without tie-breaking (equal rank = equivalent atoms)."""
    from rdkit import Chem

    return list(Chem.CanonicalRankAtoms(mol, breakTies=False))


def stereocentres(mol: Any) -> list[int]:
    """Atoms that are (possibly unassigned) tetrahedral stereocentres."""
    from rdkit import Chem

    return [i for i, _ in Chem.FindMolChiralCenters(mol, includeUnassigned=True,
                                                     useLegacyImplementation=False)]


def _items(g: MolGraph, c: int, exclude: int) -> list[int]:
    """Groups on alkene carbon ``c`` other than its partner: heavy atoms, −1 per H."""
    return [x for x in g.nbrs[c] if x != exclude] + [-1] * g.hs[c]


def _cis_of(g: MolGraph, stereo: dict[tuple[int, int], tuple[int, int, bool]],
            c1: int, s1: int, c2: int) -> int | None:
    """The group on ``c2`` cis to heavy group ``s1`` on ``c1``, or None if unknown."""
    items2 = _items(g, c2, c1)
    if len(items2) != 2:
        return None

    def other(x: int) -> int:
        return items2[1] if items2[0] == x else items2[0]

    st = stereo.get((c1, c2))
    if st is not None:
        a, b, is_cis = st
        if a != s1:
            is_cis = not is_cis
        return b if is_cis else other(b)
    # ring double bond (ring of up to 7 atoms): ring neighbours are cis
    for r in g.atom_rings[c1]:
        ring = g.rings[r]
        if c2 in ring and len(ring) <= 7:
            ring_n2 = next((x for x in g.nbrs[c2] if x != c1 and x in ring), None)
            if ring_n2 is None:
                return None
            return ring_n2 if s1 in ring else other(ring_n2)
    return None


def _equivalent(rk: list[int], p: int, q: int) -> bool:
    if p == -1 or q == -1:
        return p == q
    return rk[p] == rk[q]


def sites(g: MolGraph, rk: list[int], stereo: dict[tuple[int, int], tuple[int, int, bool]],
          subs: dict[tuple[int, int], str]) -> list[tuple[Site, str]]:
    """Every H site with its kind: ``sp3``, ``alkene``, ``aromatic``,
    ``aldehyde``, ``alkyne``, ``allene``, ``imine``, ``XH`` or ``other``."""
    out: list[tuple[Site, str]] = []
    for c in range(g.n):
        nh = g.hs[c]
        if nh == 0:
            continue
        if g.el[c] != "C":
            out.append((Site(c, nh, ""), "XH"))
            continue
        if g.arom[c]:
            out.append((Site(c, nh, ""), "aromatic"))
            continue
        if g.is_sp3_carbon(c):
            out.append((Site(c, nh, ""), "sp3" if g.charge[c] == 0 else "other"))
            continue
        if g.triple_partner(c) >= 0:
            out.append((Site(c, nh, ""), "alkyne"))
            continue
        d = g.double_partner(c)
        if d < 0:
            out.append((Site(c, nh, ""), "other"))
            continue
        if g.el[d] == "O":
            out.append((Site(c, nh, ""), "aldehyde"))
            continue
        if g.el[d] == "N":
            out.append((Site(c, nh, ""), "imine"))
            continue
        if g.el[d] != "C" or g.double_partner(d, exclude=c) >= 0:
            out.append((Site(c, nh, "", partner=d), "allene" if g.el[d] == "C" else "other"))
            continue
        items2 = _items(g, d, c)
        if len(items2) != 2:
            out.append((Site(c, nh, ""), "other"))
            continue
        p, q = items2
        if nh == 2:
            if _equivalent(rk, p, q):
                out.append((Site(c, 2, "", cis_item=p, partner=d), "alkene"))
            else:
                for cis in (p, q):
                    name = "H" if cis == -1 else NAMES.get(substituent(g, d, cis), "group")
                    tag = f"cis to {name}"
                    out.append((Site(c, 1, tag, cis_item=cis, partner=d), "alkene"))
            continue
        # one H and one heavy group s1 on c
        s1 = next(x for x in g.nbrs[c] if x != d)
        if _equivalent(rk, p, q):
            out.append((Site(c, 1, "", cis_item=p, partner=d), "alkene"))
            continue
        cs = _cis_of(g, stereo, c, s1, d)
        cis_h = None if cs is None else (q if cs == p else p)
        out.append((Site(c, 1, "", cis_item=cis_h, partner=d), "alkene"))
    return out


def diastereotopic(g: MolGraph, rk: list[int], c: int, centres: list[int]) -> bool:
    """True for an sp3 CH2 whose two H may differ: the molecule has a
    stereocentre (other than this atom), or the CH2 lies in a ring that has an
    unsymmetrically substituted sp3 atom (e.g. methylcyclohexane)."""
    if g.hs[c] != 2 or not g.is_sp3_carbon(c):
        return False
    if any(a != c for a in centres):
        return True
    for r in g.atom_rings[c]:
        ring = g.rings[r]
        for a in ring:
            if a == c or not g.is_sp3_carbon(a) and g.el[a] == "C":
                continue
            if g.el[a] != "C":
                continue
            exo = [x for x in g.nbrs[a] if x not in ring] + [-1] * g.hs[a]
            if len(exo) == 2 and not _equivalent(rk, exo[0], exo[1]):
                return True
    return False
