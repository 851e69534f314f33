"""13C chemical shifts by simple additive rules and class values.

* sp3 carbon: Grant–Paul δ = −2.3 + 9.1 nα + 9.4 nβ − 2.5 nγ + 0.3 nδ plus
  steric corrections [1]_, counted over the sp3-carbon skeleton, plus
  substituent increments α/β/γ for every other group (heteroatoms, aryl,
  C=C, C=O, C≡N …);
* alkene carbon: δ = 123.3 + 10.6 α + 7.2 β − 1.5 γ − 7.9 α′ − 1.8 β′ +
  1.5 γ′ for alkyl carbons, plus substituent effects on C1 / C2;
* benzene carbon: 128.5 + ipso/ortho/meta/para increments [2]_; other
  aromatic rings: parent value per position plus the same increments
  transferred by ring distance;
* carbonyl, nitrile, alkyne and anything else: class values with wider
  uncertainty.

References
----------
.. [1] D. M. Grant, E. G. Paul, J. Am. Chem. Soc. 1964, 86, 2984.
.. [2] E. Pretsch, A. Fürst, W. Robien, Anal. Chim. Acta 1991, 248, 415.
"""

from __future__ import annotations

from typing import Any

from elucidate.model import CarbonShift
from elucidate.predict import tables
from elucidate.predict.graph import MolGraph, alkyl_subtype, substituent
from elucidate.predict.increments import NAMES, lookup, parent_position, ring_distances

__all__ = ["carbon_shifts"]


def _fmt(v: float) -> str:
    return f"{v:+.2f}"


def _close(terms: list[tuple[float, str]], method: str) -> tuple[float, tuple[str, ...]]:
    total = sum(v for v, _ in terms)
    deriv = [f"{terms[0][0]:.1f} {terms[0][1]}"] + [f"{v:+.1f} {t}" for v, t in terms[1:]]
    deriv.append(f"= {total:.1f} ({method})")
    return total, tuple(deriv)


def _class(name: str, note: str = "") -> tuple[float, float, tuple[str, ...]]:
    row = tables.carbon_class()[name]
    d = [f"{row['shift']:.1f} class value ({row.source})"]
    if note:
        d.append(note)
    return row["shift"], row["uncertainty"], tuple(d)


def _key(g: MolGraph, a: int, x: int, subs: dict[tuple[int, int], str]) -> str:
    k = subs.get((a, x))
    if k is None:
        k = substituent(g, a, x)
        subs[(a, x)] = k
    return k


def _sp3(g: MolGraph, c: int, subs: dict[tuple[int, int], str]) -> tuple[float, float, tuple[str, ...]]:
    b = tables.bases()
    table = tables.carbon_alkane()
    # distances over the sp3-carbon skeleton
    dist = {c: 0}
    frontier = [c]
    for d in range(1, 5):
        nxt = []
        for a in frontier:
            for y in g.nbrs[a]:
                if y not in dist and g.is_sp3_carbon(y):
                    dist[y] = d
                    nxt.append(y)
        frontier = nxt
    counts = [0] * 5
    for d in dist.values():
        counts[d] += 1
    terms: list[tuple[float, str]] = [(b["c13_alkane_base"]["value"], "Grant–Paul base")]
    for d, name in ((1, "alpha"), (2, "beta"), (3, "gamma"), (4, "delta")):
        if counts[d]:
            v = b[f"c13_{name}"]["value"]
            terms.append((v * counts[d], f"{counts[d]}×{name} C"))
    # steric corrections
    deg = sum(1 for y in g.nbrs[c] if g.is_sp3_carbon(y))
    steric = tables.carbon_steric()
    if deg:
        corr = 0.0
        for y in g.nbrs[c]:
            if g.is_sp3_carbon(y):
                dy = sum(1 for z in g.nbrs[y] if g.is_sp3_carbon(z))
                corr += steric.get((min(deg, 4), min(dy, 4)), 0.0)
        if corr:
            terms.append((corr, "steric corrections"))
    unc = 2.5 + (2.0 if g.atom_rings[c] else 0.0)  # Grant–Paul is less good in rings
    cols = ("alpha", "beta", "gamma")
    for a, d in dist.items():
        if d > 2:
            continue
        for x in g.nbrs[a]:
            if x in dist or g.is_sp3_carbon(x):
                continue
            k = _key(g, a, x, subs)
            if k == "R":
                continue
            row, used, fell = lookup(table, k)
            if row is None:
                unc += 3.0
                continue
            if fell:
                unc += 1.5
            col = cols[d]
            if d == 0 and deg >= 2:
                col = "alpha_internal"  # substituent on an internal (branched) carbon
            terms.append((row[col], f"{cols[d]}-{NAMES.get(used, used)}{' (internal)' if col == 'alpha_internal' else ''}"))
            if d == 0:
                unc += 1.0
    total, deriv = _close(terms, "Grant–Paul + substituent increments")
    return total, unc, deriv


def _alkene(g: MolGraph, c: int, subs: dict[tuple[int, int], str]) -> tuple[float, float, tuple[str, ...]]:
    b = tables.bases()
    c2 = g.double_partner(c)
    table = tables.carbon_alkene()
    terms: list[tuple[float, str]] = [(b["c13_alkene_base"]["value"], "alkene base")]
    unc = 3.0

    def alkyl_terms(start: int, prime: str) -> int:
        # sp3 carbons at 1, 2, 3 bonds from the alkene carbon (not across the C=C)
        seen = {c, c2}
        frontier = [start]
        n_alpha = 0
        for d, name in ((1, "alpha"), (2, "beta"), (3, "gamma")):
            nxt = []
            for a in frontier:
                for y in g.nbrs[a]:
                    if y not in seen and g.is_sp3_carbon(y):
                        seen.add(y)
                        nxt.append(y)
            if nxt:
                v = b[f"c13_alkene_{name}{prime}"]["value"]
                terms.append((v * len(nxt), f"{len(nxt)}×{name}{'′' if prime else ''} C"))
            if d == 1:
                n_alpha = len(nxt)
            frontier = nxt
        return n_alpha

    na = alkyl_terms(c, "")
    nap = alkyl_terms(c2, "_p")
    if na >= 2:
        terms.append((-4.8, "two α (correction)"))
    if nap >= 2:
        terms.append((2.5, "two α′ (correction)"))
    for atom, col in ((c, "c1"), (c2, "c2")):
        other = c2 if atom == c else c
        for x in g.nbrs[atom]:
            if x == other or g.is_sp3_carbon(x):
                continue
            k = _key(g, atom, x, subs)
            row, used, fell = lookup(table, k)
            if row is None:
                unc += 5.0
                continue
            if fell:
                unc += 2.0
            terms.append((row[col], f"{'C1' if col == 'c1' else 'C2'}-{NAMES.get(used, used)}"))
    total, deriv = _close(terms, "alkene additivity")
    return total, unc, deriv


def _aromatic(g: MolGraph, mol: Any, c: int, subs: dict[tuple[int, int], str],
              cache: dict[frozenset[int], Any]) -> tuple[float, float, tuple[str, ...]]:
    system = g.aro_system.get(c, frozenset())
    table = tables.carbon_benzene()
    if len(system) == 6 and all(g.el[a] == "C" for a in system):
        terms: list[tuple[float, str]] = [(tables.bases()["c13_benzene_base"]["value"], "benzene base")]
        unc = 1.5
        method = "benzene substituent increments"
    else:
        found = parent_position(g, mol, c, cache)
        if found is None or found[1].get(found[2][c], (None, None))[1] is None:
            return _class("aromatic_other", "note: no parent ring value; coarse class value")
        name, pos, amap = found
        _, c13, src = pos[amap[c]]
        assert c13 is not None
        terms = [(c13, f"{name} parent value")]
        unc = 3.0
        method = "parent ring value + benzene increments transferred"
    dist = ring_distances(g, system, c)
    cols = {0: "ipso", 1: "ortho", 2: "meta", 3: "para"}
    for a in sorted(system):
        d = dist.get(a)
        if d is None or d > 3:
            continue
        for x in g.nbrs[a]:
            if x in system:
                continue
            k = _key(g, a, x, subs)
            if k == "R":
                k = alkyl_subtype(g, a, x)
            row, used, fell = lookup(table, k)
            if row is None:
                unc += 3.0
                continue
            if fell:
                unc += 1.5
            terms.append((row[cols[d]], f"{cols[d]}-{NAMES.get(used, used)}"))
            unc += 0.3
    total, deriv = _close(terms, method)
    return total, unc, deriv


def _carbonyl(g: MolGraph, c: int) -> tuple[float, float, tuple[str, ...]]:
    o = g.double_partner(c)
    others = [y for y in g.nbrs[c] if y != o]
    conj = any(g.el[y] == "C" and (g.arom[y] or g.double_partner(y) >= 0 or g.triple_partner(y) >= 0)
               for y in others)
    n_o = [y for y in others if g.el[y] == "O"]
    n_n = [y for y in others if g.el[y] == "N"]
    if any(g.el[y] in ("F", "Cl", "Br", "I") for y in others):
        return _class("acyl_halide")
    if len(n_o) + len(n_n) >= 2:
        return _class("carbonate")
    if n_o:
        y = n_o[0]
        if g.hs[y] or g.charge[y] < 0:
            return _class("acid_conj" if conj else "acid")
        if any(z != c and g.is_carbonyl_carbon(z) for z in g.nbrs[y]):
            return _class("anhydride")
        if g.hs[c]:
            return _class("formate")
        return _class("ester_conj" if conj else "ester")
    if n_n:
        return _class("formamide" if g.hs[c] else "amide")
    if g.hs[c]:
        return _class("aldehyde_conj" if conj else "aldehyde")
    return _class("ketone_conj" if conj else "ketone")


def _one(g: MolGraph, mol: Any, c: int, subs: dict[tuple[int, int], str],
         cache: dict[frozenset[int], Any]) -> tuple[float, float, tuple[str, ...]]:
    if g.arom[c]:
        return _aromatic(g, mol, c, subs, cache)
    if g.is_sp3_carbon(c):
        if g.charge[c]:
            return _class("sp3_other", "note: charged carbon")
        return _sp3(g, c, subs)
    t = g.triple_partner(c)
    if t >= 0:
        if g.el[t] == "N":
            return _class("nitrile")
        return _class("alkyne_terminal" if g.hs[c] else "alkyne_internal")
    d = g.double_partner(c)
    if d < 0:
        return _class("sp2_other")
    doubles = [y for y, o in g.order[c].items() if o == 2]
    if len(doubles) == 2:
        return _class("allene_centre")
    if g.el[d] == "O":
        return _carbonyl(g, c)
    if g.el[d] == "N":
        return _class("imine")
    if g.el[d] == "S":
        return _class("thiocarbonyl")
    if g.el[d] == "C":
        if g.double_partner(d, exclude=c) >= 0:
            return _class("sp2_other", "note: allene terminal carbon")
        return _alkene(g, c, subs)
    return _class("sp2_other")


def carbon_shifts(g: MolGraph, mol: Any, rk: list[int], subs: dict[tuple[int, int], str],
                  cache: dict[frozenset[int], Any]) -> tuple[CarbonShift, ...]:
    """Predicted 13C shift of every set of equivalent carbons, in atom order."""
    groups: dict[int, list[int]] = {}
    for i in range(g.n):
        if g.el[i] == "C":
            groups.setdefault(rk[i], []).append(i)
    out = []
    for atoms in sorted(groups.values()):
        shift, unc, deriv = _one(g, mol, atoms[0], subs, cache)
        out.append(CarbonShift(tuple(atoms), g.hs[atoms[0]], round(shift, 1), round(unc, 1), deriv))
    return tuple(out)
