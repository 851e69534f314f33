"""A light, list-based view of an RDKit molecule and substituent classes.

The shift rules walk the molecular graph many times; plain Python lists
are several times faster to walk than RDKit atom objects, so the molecule
is copied once into a :class:`MolGraph`.

Substituent classes (the ``key`` column of the increment tables) describe
the group attached through atom ``x`` as seen from atom ``a``:
``R`` (alkyl), ``Ar``, ``C=C``, ``C#C``, ``CHO``, ``COR``, ``COAr``,
``COOH``, ``COOR``, ``CONR2``, ``COCl``, ``CN``, ``C=N``, ``CF3``, ``F``,
``Cl``, ``Br``, ``I``, ``OH``, ``OR``, ``OAr``, ``OCOR``, ``OCOAr``,
``OSO2R``, ``NH2``, ``NR2``, ``NAr``, ``NCOR``, ``Narom``, ``NO2``, ``SH``,
``SR``, ``SAr``, ``SOR``, ``SO2R``, ``SiR3``, or ``other``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

__all__ = ["MolGraph", "build_graph", "substituent", "alkyl_subtype", "FALLBACK"]

HALOGENS = frozenset({"F", "Cl", "Br", "I"})
_CIS = ("STEREOZ", "STEREOCIS")
_TRANS = ("STEREOE", "STEREOTRANS")

#: Where a class has no row in a table, the next coarser class to try.
FALLBACK: dict[str, str] = {
    "OCOAr": "OCOR",
    "OSO2R": "OCOR",
    "COAr": "COR",
    "COCl": "COR",
    "C=N": "COR",
    "NAr": "NR2",
    "NH2": "NR2",
    "NCOR": "NR2",
    "Narom": "NR2",
    "SAr": "SR",
    "SH": "SR",
    "SOR": "SO2R",
    "SO2Cl": "SO2R",
    "OAr": "OR",
    "OH": "OR",
    "CONR2": "COOR",
    "COOH": "COOR",
    "CHO": "COR",
    "R_ring": "R",
    "R2": "R",
    "R3": "R",
    "R4": "R",
    "CH2O": "R",
    "CH2N": "R",
    "CH2S": "R",
    "CH2Hal": "R",
    "CH2CO": "R",
    "CH2Ar": "R",
    "C=C_conj": "C=C",
    "CF3": "R",
    "SiR3": "R",
    "other": "R",
}


@dataclass(slots=True)
class MolGraph:
    """Atoms and bonds of one molecule as plain lists (heavy atoms only).

    ``order[i][j]`` is the bond order between neighbours (1, 2, 3; 4 for
    aromatic).  ``rings`` are the SSSR rings; ``aro_systems`` maps an
    aromatic atom to the frozenset of atoms of its fused aromatic system.
    """

    n: int
    el: list[str]
    hs: list[int]
    arom: list[bool]
    charge: list[int]
    nbrs: list[list[int]]
    order: list[dict[int, int]]
    rings: list[tuple[int, ...]]
    atom_rings: list[list[int]]
    aro_system: dict[int, frozenset[int]] = field(default_factory=dict)
    sp3: list[bool] = field(default_factory=list)
    stereo: dict[tuple[int, int], tuple[int, int, bool]] = field(default_factory=dict)

    def heavy_degree(self, i: int) -> int:
        return len(self.nbrs[i])

    def is_sp3_carbon(self, i: int) -> bool:
        return self.sp3[i]

    def double_partner(self, i: int, exclude: int = -1) -> int:
        """Neighbour joined to ``i`` by a (non-aromatic) double bond, or −1."""
        for j, o in self.order[i].items():
            if o == 2 and j != exclude:
                return j
        return -1

    def triple_partner(self, i: int) -> int:
        for j, o in self.order[i].items():
            if o == 3:
                return j
        return -1

    def is_carbonyl_carbon(self, i: int) -> bool:
        if self.el[i] != "C" or self.arom[i]:
            return False
        j = self.double_partner(i)
        return j >= 0 and self.el[j] == "O"

    def same_ring(self, i: int, j: int) -> bool:
        ri = self.atom_rings[i]
        return any(r in ri for r in self.atom_rings[j])


def build_graph(mol: Any) -> MolGraph:
    """Copy an RDKit molecule (implicit H) into a :class:`MolGraph`."""
    n = mol.GetNumAtoms()
    el: list[str] = []
    hs: list[int] = []
    arom: list[bool] = []
    charge: list[int] = []
    for atom in mol.GetAtoms():
        el.append(atom.GetSymbol())
        hs.append(atom.GetTotalNumHs())
        arom.append(atom.GetIsAromatic())
        charge.append(atom.GetFormalCharge())
    nbrs: list[list[int]] = [[] for _ in range(n)]
    order: list[dict[int, int]] = [{} for _ in range(n)]
    stereo: dict[tuple[int, int], tuple[int, int, bool]] = {}
    for bond in mol.GetBonds():
        i, j = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        bt = bond.GetBondTypeAsDouble()
        o = 4 if bt == 1.5 else int(bt)
        nbrs[i].append(j)
        nbrs[j].append(i)
        order[i][j] = o
        order[j][i] = o
        if o == 2:
            st = str(bond.GetStereo())
            if st in _CIS or st in _TRANS:
                sa = list(bond.GetStereoAtoms())
                if len(sa) == 2:
                    is_cis = st in _CIS
                    stereo[(i, j)] = (sa[0], sa[1], is_cis)
                    stereo[(j, i)] = (sa[1], sa[0], is_cis)
    rings = [tuple(r) for r in mol.GetRingInfo().AtomRings()]
    atom_rings: list[list[int]] = [[] for _ in range(n)]
    for k, r in enumerate(rings):
        for a in r:
            atom_rings[a].append(k)
    g = MolGraph(n, el, hs, arom, charge, nbrs, order, rings, atom_rings)
    g.sp3 = [el[i] == "C" and not arom[i] and all(o == 1 for o in order[i].values()) for i in range(n)]
    g.stereo = stereo
    # fused aromatic ring systems
    aro_rings = [set(r) for r in rings if all(arom[a] for a in r)]
    systems: list[set[int]] = []
    for r in aro_rings:
        merged = [s for s in systems if s & r]
        for s in merged:
            systems.remove(s)
            r = r | s
        systems.append(r)
    for s in systems:
        fs = frozenset(s)
        for a in s:
            g.aro_system[a] = fs
    return g


def _carbonyl_key(g: MolGraph, a: int, x: int) -> str:
    """Class of a carbonyl carbon ``x`` seen from ``a``."""
    o = g.double_partner(x)
    others = [y for y in g.nbrs[x] if y != a and y != o]
    if not others:
        return "CHO"
    y = others[0]
    ey = g.el[y]
    if ey == "O":
        return "COOH" if g.hs[y] or g.charge[y] < 0 else "COOR"
    if ey == "N":
        return "CONR2"
    if ey in HALOGENS:
        return "COCl"
    if ey == "C" and (g.arom[y]):
        return "COAr"
    return "COR"


def substituent(g: MolGraph, a: int, x: int) -> str:
    """Class of the group attached to atom ``a`` through its neighbour ``x``.

    Examples: in ethyl acetate (``CCOC(C)=O``) the group on C1 through O2 is
    ``OCOR``; on C4 (the acetyl CH3) through C3 it is ``COOR``.
    """
    e = g.el[x]
    if e in HALOGENS:
        return e
    if e == "C":
        if g.arom[x]:
            return "Ar"
        t = g.triple_partner(x)
        if t >= 0:
            return "CN" if g.el[t] == "N" else "C#C"
        d = g.double_partner(x, exclude=a)
        if d >= 0:
            ed = g.el[d]
            if ed == "O":
                return _carbonyl_key(g, a, x)
            if ed == "C":
                return "C=C"
            if ed == "N":
                return "C=N"
            return "other"
        if g.order[x].get(a, 1) != 1:
            return "other"
        nf = sum(1 for y in g.nbrs[x] if g.el[y] == "F")
        if nf == 3:
            return "CF3"
        return "R"
    if e == "O":
        if g.order[x].get(a, 1) != 1:
            return "other"
        others = [y for y in g.nbrs[x] if y != a]
        if not others:
            return "OH"
        y = others[0]
        if g.el[y] == "C":
            if g.arom[y]:
                return "OAr"
            if g.is_carbonyl_carbon(y):
                k = _carbonyl_key(g, x, y)
                return "OCOAr" if k == "COAr" else "OCOR"
            return "OR"
        if g.el[y] == "S" and sum(1 for z in g.nbrs[y] if g.el[z] == "O" and g.order[y][z] == 2) >= 1:
            return "OSO2R"
        if g.el[y] == "Si":
            return "OR"
        return "other"
    if e == "N":
        if g.arom[x]:
            return "Narom"
        n_o = sum(1 for y in g.nbrs[x] if g.el[y] == "O")
        if n_o >= 2:
            return "NO2"
        others = [y for y in g.nbrs[x] if y != a]
        if any(o != 1 for o in g.order[x].values()):
            return "other"
        for y in others:
            if g.is_carbonyl_carbon(y):
                return "NCOR"
            if g.el[y] == "S" and any(g.el[z] == "O" for z in g.nbrs[y]):
                return "NCOR"
        if any(g.arom[y] for y in others):
            return "NAr"
        if g.charge[x] != 0 or n_o:
            return "other"
        return "NH2" if g.hs[x] else "NR2"
    if e == "S":
        n_o = sum(1 for y in g.nbrs[x] if g.el[y] == "O" and g.order[x][y] == 2)
        if n_o == 1:
            return "SOR"
        if n_o >= 2:
            return "SO2R"
        if g.order[x].get(a, 1) != 1:
            return "other"
        others = [y for y in g.nbrs[x] if y != a]
        if not others:
            return "SH"
        if any(g.arom[y] for y in others):
            return "SAr"
        return "SR"
    if e == "Si":
        return "SiR3"
    return "other"


def alkyl_subtype(g: MolGraph, a: int, x: int) -> str:
    """Finer class of an sp3 carbon ``x`` attached to ``a`` (for the alkene
    and benzene tables): ``CH2O``, ``CH2N``, ``CH2S``, ``CH2Hal``, ``CH2CO``,
    ``CH2Ar`` or, for plain alkyl, ``R``/``R2``/``R3``/``R4`` by the number
    of carbons on ``x`` (CH3, CH2R, CHR2, CR3)."""
    ncarb = 0
    for y in g.nbrs[x]:
        if y == a:
            continue
        ey = g.el[y]
        if ey == "O":
            return "CH2O"
        if ey == "N":
            return "CH2N"
        if ey == "S":
            return "CH2S"
        if ey in HALOGENS:
            return "CH2Hal"
        if ey == "C":
            if g.arom[y]:
                return "CH2Ar"
            if g.is_carbonyl_carbon(y) or g.triple_partner(y) >= 0 and g.el[g.triple_partner(y)] == "N":
                return "CH2CO"
            ncarb += 1
    return ("R", "R2", "R3", "R4")[min(ncarb, 3)]
