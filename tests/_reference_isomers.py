"""A slow, obviously-correct isomer enumerator used only by the tests.

Method (make everything, deduplicate by canonical SMILES — exactly what the
package must not do, which is why it is a fair independent check):

1. every tree of single bonds on the heavy atoms, grown one leaf at a time;
2. from each tree, add one bond unit at a time (a new single bond between
   two atoms, or raise a bond's order by one up to 3) while valences allow,
   until the number of bond units matches the formula's H count;
3. keep the connected results, write RDKit canonical SMILES (aromatic form),
   deduplicate in a set.

Every molecule has a spanning tree reachable in step 1 and is reached from
it in step 2 by adding its other bond units in any order, so nothing is
missed; the final set removes duplicates, Kekulé forms included.
"""

from __future__ import annotations

import functools

from rdkit import Chem

VALENCE = {"C": 4, "Si": 4, "N": 3, "P": 3, "O": 2, "S": 2, "F": 1, "Cl": 1, "Br": 1, "I": 1}

Graph = tuple[tuple[str, ...], frozenset[tuple[int, int, int]]]


def _key(atoms: tuple[str, ...], bonds: frozenset[tuple[int, int, int]]) -> str:
    rw = Chem.RWMol()
    for el in atoms:
        a = Chem.Atom(el)
        a.SetNoImplicit(True)
        rw.AddAtom(a)
    bt = {1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE}
    for u, v, o in bonds:
        rw.AddBond(u, v, bt[o])
    m = rw.GetMol()
    m.UpdatePropertyCache(strict=False)
    return Chem.MolToSmiles(m)


def _bsum(n: int, bonds: frozenset[tuple[int, int, int]]) -> list[int]:
    s = [0] * n
    for u, v, o in bonds:
        s[u] += o
        s[v] += o
    return s


def reference_isomers(counts: dict[str, int]) -> set[str]:
    """Cached front of :func:`_reference_isomers` (returns a copy)."""
    return set(_cached(tuple(sorted(counts.items()))))


@functools.cache
def _cached(items: tuple[tuple[str, int], ...]) -> frozenset[str]:
    return frozenset(_reference_isomers(dict(items)))


def _reference_isomers(counts: dict[str, int]) -> set[str]:
    """Canonical SMILES of every isomer of a formula (heavy atoms + H).

    Parameters
    ----------
    counts : dict
        Element counts, e.g. ``{"C": 3, "H": 6, "O": 1}``.
    """
    heavy = sorted((el for el, k in counts.items() if el != "H" for _ in range(k)))
    h = counts.get("H", 0)
    units2 = sum(VALENCE[el] for el in heavy) - h
    if units2 < 0 or units2 % 2:
        return set()
    units = units2 // 2
    n = len(heavy)
    # 1. trees, one leaf at a time; state = (atoms placed, bonds)
    layer: dict[str, Graph] = {}
    for el in sorted(set(heavy)):
        layer[_key((el,), frozenset())] = ((el,), frozenset())
    for _ in range(n - 1):
        nxt: dict[str, Graph] = {}
        for atoms, bonds in layer.values():
            left = list(heavy)
            for el in atoms:
                left.remove(el)
            s = _bsum(len(atoms), bonds)
            for el in sorted(set(left)):
                for u in range(len(atoms)):
                    if s[u] < VALENCE[atoms[u]]:
                        g = (atoms + (el,), bonds | {(u, len(atoms), 1)})
                        nxt.setdefault(_key(*g), g)
        layer = nxt
    # 2. add bond units
    for _ in range(units - (n - 1)):
        nxt = {}
        for atoms, bonds in layer.values():
            s = _bsum(n, bonds)
            order = {(u, v): o for u, v, o in bonds}
            for u in range(n):
                for v in range(u + 1, n):
                    if s[u] >= VALENCE[atoms[u]] or s[v] >= VALENCE[atoms[v]]:
                        continue
                    o = order.get((u, v), 0)
                    if o == 3:
                        continue
                    nb = set(bonds)
                    if o:
                        nb.remove((u, v, o))
                    nb.add((u, v, o + 1))
                    g = (atoms, frozenset(nb))
                    nxt.setdefault(_key(*g), g)
        layer = nxt
    if units < n - 1:
        return set()
    # 3. final molecules with H, canonical aromatic SMILES
    out: set[str] = set()
    bt = {1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE}
    for atoms, bonds in layer.values():
        s = _bsum(n, bonds)
        rw = Chem.RWMol()
        for el, b in zip(atoms, s):
            a = Chem.Atom(el)
            a.SetNoImplicit(True)
            a.SetNumExplicitHs(VALENCE[el] - b)
            rw.AddAtom(a)
        for u, v, o in bonds:
            rw.AddBond(u, v, bt[o])
        m = rw.GetMol()
        Chem.SanitizeMol(m)
        out.add(Chem.MolToSmiles(m))
    return out


def atom_signature(smiles: str) -> list[tuple[str, int, int]]:
    """(element, H count, H on bonded carbons) per heavy atom (for constraint checks)."""
    m = Chem.MolFromSmiles(smiles)
    out = []
    for a in m.GetAtoms():
        nh = sum(b.GetTotalNumHs() for b in a.GetNeighbors() if b.GetSymbol() == "C")
        out.append((a.GetSymbol(), a.GetTotalNumHs(), nh))
    return out


def satisfies_atoms(smiles: str, specs: list[tuple[str, int, frozenset[int] | None]]) -> bool:
    """Brute force: can the atom specs be matched one-to-one to the atoms?

    Atoms and specs must agree on (element, H); within each such group every
    permutation of the specs is tried.
    """
    from itertools import permutations

    sig = atom_signature(smiles)
    if sorted((e, h) for e, h, _ in sig) != sorted((e, h) for e, h, _ in specs):
        return False
    for key in {(e, h) for e, h, _ in sig}:
        sums = [nh for e, h, nh in sig if (e, h) == key]
        sets = [s for e, h, s in specs if (e, h) == key]
        if not any(
            all(s is None or nh in s for nh, s in zip(sums, perm)) for perm in permutations(sets)
        ):
            return False
    return True
