"""First-order multiplicity: the n+1 rule over coupling partners.

Partners are H three bonds away (H–C–C–H, H–C=C–H) on non-exchangeable
sites, grouped by environment; equivalent H do not split each other; H on
O/N/S are broad singlets without coupling.  Aromatic rings are read as
chemists read them: ortho couplings always, a meta coupling only to an
isolated ring H (one with no ortho H), so a para-disubstituted ring gives
two doublets and a 1,2,4-trisubstituted ring d / dd / d.  A terminal alkyne
H couples to propargylic H (four bonds, ~2.6 Hz), as usually resolved.

Couplings with about the same J (within 1 Hz) merge into one n+1 pattern
(a propyl CH2 is a sextet, not a qt); an `m` is reported where first-order
rules do not hold (Δν/J < 1 to a partner at the given field, or a pattern
with more than seven lines or more than three different J).
"""

from __future__ import annotations

from elucidate.predict import tables
from elucidate.predict.graph import MolGraph
from elucidate.predict.increments import Site

__all__ = ["partners", "pattern", "LETTERS"]

LETTERS = {1: "s", 2: "d", 3: "t", 4: "q", 5: "quint", 6: "sext", 7: "sept"}


def _j(kind: str) -> float:
    return tables.couplings()[kind]["j_hz"]


def _ortho_kind(g: MolGraph, a: int, b: int) -> str:
    system = g.aro_system.get(a, frozenset())
    ring = next((g.rings[r] for r in g.atom_rings[a] if b in g.rings[r]), ())
    if len(ring) == 5:
        return "five-ring aromatic"
    for x in (a, b):
        if any(g.el[y] == "N" and y in system for y in g.nbrs[x]):
            return "ortho aromatic next to N"
    return "ortho aromatic"


def _alkene_relation(g: MolGraph, s: Site, t: Site) -> str:
    """cis / trans / unknown between H sites on the two ends of a C=C."""
    if t.cis_item is not None and g.hs[s.atom] == 1:
        return "cis" if t.cis_item == -1 else "trans"
    if s.cis_item is not None and g.hs[t.atom] == 1:
        return "cis" if s.cis_item == -1 else "trans"
    return "unknown"


def partners(g: MolGraph, site_list: list[tuple[Site, str]], env_of: list[int]) -> list[list[tuple[int, int, str]]]:
    """Coupling partners of every site: lists of (partner site index, h, kind).

    Small couplings are kept only where chemists usually resolve them: the
    geminal =CH2 and allylic (H–C=C–C–H) couplings on an alkene H that also
    has a large vicinal coupling, the allylic coupling on an sp3 H that has
    no other sp3 neighbour H (allyl ethers, crotonate CH3), the meta coupling
    to or from an isolated aromatic H.
    """
    by_atom: dict[int, list[int]] = {}
    for k, (s, _) in enumerate(site_list):
        by_atom.setdefault(s.atom, []).append(k)
    kinds = [kind for _, kind in site_list]
    out: list[list[tuple[int, int, str]]] = [[] for _ in site_list]
    jtab = tables.couplings()

    def ortho_count(a: int) -> int:
        return sum(1 for b in g.nbrs[a] if g.arom[b] and b in by_atom and kinds[by_atom[b][0]] == "aromatic"
                   and g.order[a].get(b) == 4)

    def vicinal(k: int) -> list[tuple[int, int, str]]:
        s, kind = site_list[k]
        a = s.atom
        found: list[tuple[int, int, str]] = []
        for b in g.nbrs[a]:
            for k2 in by_atom.get(b, ()):
                t, kind2 = site_list[k2]
                if kind2 == "XH" or env_of[k2] == env_of[k]:
                    continue
                if kind == "aromatic" and kind2 == "aromatic":
                    found.append((k2, t.h_count, _ortho_kind(g, a, b)))
                elif kind == "alkene" and kind2 == "alkene" and s.partner == b:
                    rel = _alkene_relation(g, s, t)
                    ring = any(b in g.rings[r] and len(g.rings[r]) <= 7 for r in g.atom_rings[a])
                    found.append((k2, t.h_count, "alkene ring" if ring and rel == "cis" else f"alkene {rel}"))
                elif kind == "aldehyde" or kind2 == "aldehyde":
                    found.append((k2, t.h_count, "vicinal aldehyde"))
                elif kind == "sp3" and kind2 == "sp3":
                    found.append((k2, t.h_count, "vicinal sp3"))
                elif kind in ("sp3", "alkene", "allene", "imine") and kind2 in ("sp3", "alkene", "allene", "imine"):
                    found.append((k2, t.h_count, "vicinal sp3-sp2"))
        return found

    def allylic_alkene_sites(a: int) -> list[int]:
        """Alkene H sites four bonds from the H on sp3 atom ``a``."""
        res = []
        for b in g.nbrs[a]:
            d = g.double_partner(b)
            if d < 0 or g.el[b] != "C" or g.el[d] != "C" or g.arom[b]:
                continue
            res += [k2 for k2 in by_atom.get(d, ()) if kinds[k2] == "alkene"]
        return res

    vic = [vicinal(k) if kind != "XH" else [] for k, (_, kind) in enumerate(site_list)]
    large = [any(jtab[c[2]]["j_hz"] >= 5.0 for c in v) for v in vic]
    for k, (s, kind) in enumerate(site_list):
        if kind == "XH":
            continue
        a = s.atom
        found = list(vic[k])
        if kind == "alkene" and large[k]:
            # geminal partner on the same atom (split =CH2)
            for k2 in by_atom[a]:
                if k2 != k and env_of[k2] != env_of[k]:
                    found.append((k2, site_list[k2][0].h_count, "alkene geminal"))
            # allylic H on sp3 carbons of the other alkene carbon
            for y in g.nbrs[s.partner] if s.partner >= 0 else ():
                if y != a and g.is_sp3_carbon(y):
                    for k2 in by_atom.get(y, ()):
                        if kinds[k2] == "sp3":
                            found.append((k2, site_list[k2][0].h_count, "allylic"))
        if kind == "sp3" and not any(c[2] == "vicinal sp3" for c in found):
            for k2 in allylic_alkene_sites(a):
                if large[k2]:
                    found.append((k2, site_list[k2][0].h_count, "allylic"))
        if kind == "sp3":
            # amide N–H couples to H on the N-carbon (resolved in CDCl3)
            for b in g.nbrs[a]:
                if g.el[b] == "N" and g.hs[b] and not g.arom[b] and any(g.is_carbonyl_carbon(y) for y in g.nbrs[b]):
                    for k2 in by_atom.get(b, ()):
                        found.append((k2, site_list[k2][0].h_count, "amide NH-CH"))
        if kind == "aromatic":
            system = g.aro_system.get(a, frozenset())
            for b in g.nbrs[a]:
                if b not in system:
                    continue
                for c in g.nbrs[b]:
                    if c == a or c not in system or c in g.nbrs[a] or c not in by_atom:
                        continue
                    k2 = by_atom[c][0]
                    if kinds[k2] != "aromatic" or env_of[k2] == env_of[k]:
                        continue
                    ring6 = any(c in g.rings[r] and len(g.rings[r]) == 6 for r in g.atom_rings[a])
                    if ring6 and (ortho_count(a) == 0 or ortho_count(c) == 0):
                        if not any(f[0] == k2 for f in found):
                            found.append((k2, site_list[k2][0].h_count, "meta aromatic"))
        if kind == "alkyne":
            t_atom = g.triple_partner(a)
            for y in g.nbrs[t_atom]:
                if y != a:
                    for k2 in by_atom.get(y, ()):
                        if site_list[k2][1] == "sp3":
                            found.append((k2, site_list[k2][0].h_count, "propargylic"))
        if kind == "sp3":
            for b in g.nbrs[a]:
                if g.triple_partner(b) >= 0:
                    t_atom = g.triple_partner(b)
                    for k2 in by_atom.get(t_atom, ()):
                        if site_list[k2][1] == "alkyne":
                            found.append((k2, site_list[k2][0].h_count, "propargylic"))
        out[k] = found
    return out


def pattern(couplings: list[tuple[int, float]], second_order: bool) -> str:
    """Multiplicity letters from (h count, J) pairs.

    Examples
    --------
    >>> pattern([(2, 7.0)], False)
    't'
    >>> pattern([(3, 7.0), (2, 7.0)], False)
    'sext'
    >>> pattern([(1, 16.0), (1, 10.0)], False)
    'dd'
    """
    if second_order:
        return "m"
    if not couplings:
        return "s"
    groups: list[list[float]] = []  # [J, n]
    for n, j in sorted(couplings, key=lambda p: -p[1]):
        for grp in groups:
            if abs(grp[0] - j) <= 1.0:
                grp[0] = (grp[0] * grp[1] + j * n) / (grp[1] + n)
                grp[1] += n
                break
        else:
            groups.append([j, float(n)])
    groups.sort(key=lambda p: -p[0])
    if len(groups) == 1:
        return LETTERS.get(int(groups[0][1]) + 1, "m")
    if len(groups) > 3 or any(int(n) > 3 for _, n in groups):
        return "m"
    return "".join(LETTERS[int(n) + 1] for _, n in groups)
