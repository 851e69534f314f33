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


def _carbocycle(g: MolGraph, c: int) -> tuple[int, ...] | None:
    """The saturated carbocycle (3 to 7 sp3 carbons) of ``c`` when ``c`` lies in
    just one ring; fused and bridged ring atoms are left to plain Grant–Paul."""
    if len(g.atom_rings[c]) != 1:
        return None
    best = None
    for r in g.atom_rings[c]:
        ring = g.rings[r]
        if 3 <= len(ring) <= 7 and all(g.sp3[a] for a in ring):
            if best is None or len(ring) < len(best):
                best = ring
    return best


def _rule(name: str) -> float:
    return tables.carbon_rules()[name]["value"]


_O_KEYS = frozenset({"OH", "OR", "OAr", "OCOR", "OCOAr"})
_CO_KEYS = frozenset({"CHO", "COR", "COAr", "COOR", "COOH", "CONR2"})
_N_REF = {"NR2": 2, "NAr": 1, "NCOR": 1}


def _cis(g: MolGraph, x: int, p: int, c: int, y: int) -> float:
    """Chance that ``c`` (on alkene carbon ``x``) is cis to ``y`` (on its partner ``p``).

    From the SMILES geometry if given; in a ring of up to seven atoms the
    ring atoms are mutually cis; otherwise 0.5 (geometry not known).
    """
    st = g.stereo.get((x, p))
    if st is not None:
        sx, sp, is_cis = st
        same = (c == sx) == (y == sp)
        return 1.0 if same == is_cis else 0.0
    for r in g.atom_rings[x]:
        ring = g.rings[r]
        if p in ring and len(ring) <= 7:
            return 1.0 if (c in ring) == (y in ring) else 0.0
    return 0.5


def _hetaryl_alpha(g: MolGraph, x: int) -> str | None:
    """Rule name for an sp3 carbon on a heteroaromatic ring atom ``x``."""
    best = None
    for r in g.atom_rings[x]:
        ring = g.rings[r]
        if not all(g.arom[a] for a in ring):
            continue
        if best is None or len(ring) < len(best):
            best = ring
    if best is None or all(g.el[a] == "C" for a in best):
        return None
    if len(best) == 5:
        for y in g.nbrs[x]:
            if y in best and g.el[y] in ("O", "S", "N"):
                return {"O": "hetaryl_alpha_O5", "S": "hetaryl_alpha_S5", "N": "hetaryl_alpha_N5"}[g.el[y]]
        return None
    if len(best) == 6:
        n = len(best)
        i = best.index(x)
        for j, a in enumerate(best):
            if g.el[a] == "N":
                d = min((i - j) % n, (j - i) % n)
                return {1: "hetaryl_alpha_py2", 2: "hetaryl_alpha_py3", 3: "hetaryl_alpha_py4"}.get(d)
    return None


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
    ring = _carbocycle(g, c)
    if deg:
        corr = 0.0
        for y in g.nbrs[c]:
            if g.is_sp3_carbon(y) and not (ring is not None and y in ring):
                dy = sum(1 for z in g.nbrs[y] if g.is_sp3_carbon(z))
                corr += steric.get((min(deg, 4), min(dy, 4)), 0.0)
        if corr:
            terms.append((corr, "steric corrections"))
    if ring is not None:
        terms.append((_rule(f"ring_sp3_{len(ring)}"), f"{len(ring)}-membered carbocycle (parent cycloalkane)"))
    unc = 2.5 + (2.0 if g.atom_rings[c] else 0.0)  # Grant–Paul is less good in rings
    cols = ("alpha", "beta", "gamma")
    alpha: list[tuple[int, str]] = []
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
                alpha.append((x, k))
    _sp3_corrections(g, c, alpha, terms, subs)
    total, deriv = _close(terms, "Grant–Paul + substituent increments")
    return total, unc, deriv


def _sp3_corrections(g: MolGraph, c: int, alpha: list[tuple[int, str]],
                     terms: list[tuple[float, str]], subs: dict[tuple[int, int], str]) -> None:
    """Corrections to the additive sp3 value for the groups on ``c`` itself."""
    # two or more functional groups on one carbon are not additive
    for i in range(len(alpha)):
        for j in range(i + 1, len(alpha)):
            oo = g.el[alpha[i][0]] == "O" and g.el[alpha[j][0]] == "O"
            terms.append((_rule("gem_pair_oo" if oo else "gem_pair"),
                          "two O on one C (acetal type)" if oo else "two groups on one C (non-additivity)"))
    for x, k in alpha:
        if k in _N_REF or k == "NH2":
            m = len(g.nbrs[x]) - 1  # further heavy substituents on N
            if k == "NH2":
                if m >= 1:
                    terms.append((_rule("n_secondary_amine"), "secondary amine (β through N)"))
            elif m > _N_REF[k]:
                terms.append((_rule("n_extra_substituent") * (m - _N_REF[k]), "further carbon on N (β through N)"))
        elif k in ("OCOR", "OCOAr") and sum(1 for y in g.nbrs[c] if g.sp3[y]) >= 3:
            terms.append((_rule("ocor_tertiary"), "tertiary alkyl ester (acylation shift)"))
        elif k == "OAr":
            y = next((z for z in g.nbrs[x] if z != c), -1)
            system = g.aro_system.get(y, frozenset())
            ring_nb = [z for z in g.nbrs[y] if z in system]
            if len(ring_nb) == 2 and all(any(w not in system for w in g.nbrs[z]) for z in ring_nb):
                terms.append((_rule("ome_diortho"), "aryl ether with two ortho groups"))
        elif k == "Ar":
            name = _hetaryl_alpha(g, x)
            if name:
                terms.append((_rule(name), "heteroaryl instead of phenyl"))
        elif k == "C=C":
            p = g.double_partner(x)
            n_sp3 = sum(1 for y in g.nbrs[c] if g.sp3[y])
            for y in g.nbrs[x]:
                if y != c and y != p and g.el[y] == "C" and (g.sp3[y] or g.arom[y]) and n_sp3 <= 1:
                    terms.append((_rule("vinyl_beta"), "further carbon on the alkene carbon"))
            cis = 0.0
            for y in g.nbrs[p]:
                if y != x and g.el[y] == "C" and (g.sp3[y] or g.arom[y]):
                    cis += _cis(g, x, p, c, y)
            if cis:
                terms.append((_rule("vinyl_cis") * cis, "cis carbon across the C=C" + (" (geometry averaged)" if cis % 1 else "")))


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
    if any(y != c and (g.is_carbonyl_carbon(y) or g.triple_partner(y) >= 0 and g.el[g.triple_partner(y)] == "N")
           for y in g.nbrs[c2]):
        n_alk = sum(1 for y in g.nbrs[c] if y != c2 and g.sp3[y])
        if n_alk:
            terms.append((_rule("enone_beta_alkyl") * n_alk, f"{n_alk}× alkyl on the β-carbon of C=C–C=O"))
    total, deriv = _close(terms, "alkene additivity")
    return total, unc, deriv


def _carbon_distances(g: MolGraph, system: frozenset[int], start: int) -> dict[int, int]:
    """Ring distances through carbon atoms only (five-membered heteroaromatics:
    C5 is reached from C2 over C3 and C4, the conjugation path, not over the
    heteroatom)."""
    dist = {start: 0}
    frontier = [start]
    while frontier:
        nxt = []
        for a in frontier:
            for b in g.nbrs[a]:
                if b in system and b not in dist and g.el[b] == "C":
                    dist[b] = dist[a] + 1
                    nxt.append(b)
        frontier = nxt
    return dist


def _aryl_key(g: MolGraph, a: int, x: int, subs: dict[tuple[int, int], str]) -> str:
    k = _key(g, a, x, subs)
    if k == "R":
        k = alkyl_subtype(g, a, x)
        if k == "CH2CO" and any(g.triple_partner(y) >= 0 for y in g.nbrs[x] if y != a):
            return "CH2CN"
        if k == "CH2Ar":
            return "R2"
    elif k == "C=C":
        p = g.double_partner(x)
        if any(y != x and (g.is_carbonyl_carbon(y) or g.triple_partner(y) >= 0) for y in g.nbrs[p]):
            return "C=C_EWG"
    return k


def _side_chain(g: MolGraph, a: int, x: int, k: str, subs: dict[tuple[int, int], str],
                terms: list[tuple[float, str]]) -> None:
    """Ipso corrections for what an alkyl side chain carries beyond its first carbon."""
    alkane = tables.carbon_alkane()
    if k in ("R2", "R3", "R4"):
        scale = _rule("side_gamma_scale")
        for y in g.nbrs[x]:
            if y == a:
                continue
            if g.sp3[y]:
                for z in g.nbrs[y]:
                    if z == x or g.sp3[z]:
                        continue
                    kz = _key(g, y, z, subs)
                    row, used, _ = lookup(alkane, kz)
                    if kz != "R" and row is not None:
                        terms.append((row["gamma"] * scale, f"side-chain γ-{NAMES.get(used, used)}"))
            elif g.el[y] == "C":
                ky = _key(g, x, y, subs)
                row, used, _ = lookup(alkane, ky)
                if ky != "R" and row is not None:
                    terms.append((row["gamma"] * scale, f"side-chain γ-{NAMES.get(used, used)}"))
    elif k in ("CH2O", "CH2N", "CH2S", "CH2Hal"):
        n_c = sum(1 for y in g.nbrs[x] if y != a and g.el[y] == "C")
        if n_c:
            terms.append((_rule("side_branch") * n_c, f"{n_c}× further carbon on the benzylic carbon"))
        for y in g.nbrs[x]:
            if y != a and g.el[y] in ("O", "N", "S") and any(z != x and g.el[z] == "C" for z in g.nbrs[y]):
                terms.append((_rule("side_hetero_gamma"), "carbon on the benzylic heteroatom (γ)"))
                break


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
    if len(system) == 5:
        dist = _carbon_distances(g, system, c)
    else:
        dist = ring_distances(g, system, c)
    cols = {0: "ipso", 1: "ortho", 2: "meta", 3: "para"}
    groups: dict[int, list[tuple[int, str]]] = {}
    for a in sorted(system):
        d = dist.get(a)
        if d is None or d > 3:
            continue
        for x in g.nbrs[a]:
            if x in system:
                continue
            k = _aryl_key(g, a, x, subs)
            groups.setdefault(a, []).append((x, k))
            row, used, fell = lookup(table, k)
            if row is None:
                unc += 3.0
                continue
            if fell:
                unc += 1.5
            terms.append((row[cols[d]], f"{cols[d]}-{NAMES.get(used, used)}"))
            unc += 0.3
            if d == 0:
                _side_chain(g, a, x, k, subs, terms)
    _ortho_pairs(g, c, system, groups, terms)
    total, deriv = _close(terms, method)
    return total, unc, deriv


def _ortho_pairs(g: MolGraph, c: int, system: frozenset[int], groups: dict[int, list[tuple[int, str]]],
                 terms: list[tuple[float, str]]) -> None:
    """Corrections for neighbouring groups that interact (1,2-dioxy, chelated OH/C=O)."""
    def keys(a: int) -> set[str]:
        return {k for _, k in groups.get(a, ())}

    mine = keys(c)
    ring_nb = [a for a in g.nbrs[c] if a in system]
    for a in ring_nb:
        theirs = keys(a)
        if mine & _O_KEYS and theirs & _O_KEYS:
            terms.append((_rule("odioxy_ipso"), "1,2-dioxy (ortho O groups)"))
        if "OH" in mine and theirs & _CO_KEYS:
            terms.append((_rule("chelate_ipso_oh"), "OH hydrogen-bonded to an ortho C=O"))
        if mine & _CO_KEYS and "OH" in theirs:
            terms.append((_rule("chelate_ipso_co"), "C=O hydrogen-bonded to an ortho OH"))
        if not mine and theirs & _O_KEYS:
            if any(b != c and b in system and keys(b) & _O_KEYS for b in g.nbrs[a]):
                terms.append((_rule("odioxy_ortho"), "next to a 1,2-dioxy carbon"))


def _is_conj(g: MolGraph, y: int) -> bool:
    return g.el[y] == "C" and (g.arom[y] or g.double_partner(y) >= 0 or g.triple_partner(y) >= 0)


def _acyl_side(g: MolGraph, c: int, y: int, terms: list[tuple[float, str]]) -> None:
    """Increments for the sp3 carbon ``y`` on carbonyl carbon ``c``."""
    others = [z for z in g.nbrs[y] if z != c]
    n_c = sum(1 for z in others if g.el[z] == "C")
    if n_c:
        name = ("acyl_side_CH2", "acyl_side_CH", "acyl_side_C")[min(n_c, 3) - 1]
        terms.append((_rule(name), f"α-carbon with {n_c} further C"))
    if any(g.is_carbonyl_carbon(z) or g.el[z] in ("Cl", "Br") for z in others):
        terms.append((_rule("acyl_side_ewg"), "α-carbon bearing C=O / halogen"))
    elif any(g.el[z] == "C" and (g.arom[z] or g.double_partner(z) >= 0) for z in others):
        terms.append((_rule("acyl_side_aryl"), "α-carbon bearing aryl / C=C"))


def _carbonyl(g: MolGraph, c: int) -> tuple[float, float, tuple[str, ...]]:
    o = g.double_partner(c)
    others = [y for y in g.nbrs[c] if y != o]
    conj = [y for y in others if _is_conj(g, y)]
    n_o = [y for y in others if g.el[y] == "O"]
    n_n = [y for y in others if g.el[y] == "N"]
    if any(g.el[y] in ("F", "Cl", "Br", "I") for y in others):
        return _class("acyl_halide")
    if len(n_o) + len(n_n) >= 2:
        return _class("carbonate")
    if any(g.el[y] not in ("C", "O", "N") for y in others):
        return _class("ketone_conj" if conj else "ketone", "note: unusual atom on C=O; class value")
    terms: list[tuple[float, str]] = []
    kind = "ketone"
    if n_o:
        y = n_o[0]
        if g.hs[y] or g.charge[y] < 0:
            kind = "acid"
        elif any(z != c and g.is_carbonyl_carbon(z) for z in g.nbrs[y]):
            return _class("anhydride")
        elif g.hs[c]:
            return _class("formate")
        else:
            kind = "ester"
    elif n_n:
        if g.hs[c]:
            return _class("formamide")
        kind = "amide"
    elif g.hs[c]:
        kind = "aldehyde"
    base = {"ketone": "ketone", "aldehyde": "aldehyde", "acid": "ester", "ester": "ester", "amide": "amide"}[kind]
    if conj:
        terms.append((_rule(f"{base}_conj_base"), f"{base} C=O, conjugated"))
        if kind == "ketone" and len(conj) == 2:
            terms.append((_rule("ketone_conj_both"), "second conjugating group"))
    else:
        terms.append((_rule(f"{base}_base"), f"{base} C=O"))
    if kind == "acid":
        terms.append((_rule("acid_conj_offset" if conj else "acid_offset"), "acid (vs ester)"))
    for y in others:
        if g.sp3[y]:
            _acyl_side(g, c, y, terms)
    for y in conj:
        if g.arom[y]:
            system = g.aro_system.get(y, frozenset())
            if kind in ("ketone", "aldehyde") and len(system) == 5:
                het = next((g.el[z] for z in g.nbrs[y] if z in system and g.el[z] in ("O", "N", "S")), None)
                if het:
                    terms.append((_rule(f"hetaryl5_{het}"), f"on C2 of a five-membered {het}-heteroaromatic"))
            for z in g.nbrs[y]:
                if z in system and any(w not in system and g.el[w] == "O" and g.hs[w] for w in g.nbrs[z]):
                    terms.append((_rule("chelate_co"), "ortho OH (intramolecular H bond)"))
                    break
    unc = 2.5
    ring = min((g.rings[r] for r in g.atom_rings[c]), key=len, default=None)
    if ring is not None:
        n = len(ring)
        if kind == "ketone" and 3 <= n <= 7:
            terms.append((_rule(f"ketone_ring{n}"), f"{n}-membered ring ketone"))
        elif kind == "ester" and n_o[0] in ring and n in (5, 6):
            terms.append((_rule(f"lactone_ring{n}"), f"{n}-membered lactone"))
        else:
            unc += 1.5
    if kind == "ester":
        z = next(w for w in g.nbrs[n_o[0]] if w != c)
        if g.arom[z]:
            terms.append((_rule("ester_o_aryl"), "O-aryl ester"))
        elif g.double_partner(z) >= 0:
            terms.append((_rule("ester_o_vinyl"), "O-vinyl ester"))
        elif g.sp3[z] and sum(1 for w in g.nbrs[z] if g.el[w] == "C") >= 2 and (ring is None or z not in ring):
            terms.append((_rule("ester_o_branched"), "O-sec/tert-alkyl ester"))
    if kind == "amide" and any(g.arom[w] for y in n_n for w in g.nbrs[y] if w != c):
        terms.append((_rule("amide_n_aryl"), "N-aryl amide"))
    total, deriv = _close(terms, "carbonyl base + α increments")
    return total, unc, deriv


def _alkyne(g: MolGraph, c: int, t: int) -> tuple[float, float, tuple[str, ...]]:
    terms: list[tuple[float, str]] = [(_rule("alkyne_base"), "alkyne base (acetylene)")]
    unc = 2.5
    for atom, pos in ((c, "alpha"), (t, "beta")):
        for y in g.nbrs[atom]:
            if y in (c, t):
                continue
            if g.arom[y]:
                k = "Ar"
            elif g.sp3[y]:
                k = "CH2O" if any(g.el[z] in ("O", "N") for z in g.nbrs[y]) else "R"
            elif g.is_carbonyl_carbon(y):
                k = "COR"
            else:
                unc += 4.0
                continue
            terms.append((_rule(f"alkyne_{pos}_{k}"), f"{pos}-{NAMES.get(k, k)}"))
    total, deriv = _close(terms, "alkyne additivity")
    return total, unc, deriv


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
        if g.el[t] == "C" and g.triple_partner(t) == c:
            return _alkyne(g, c, t)
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
