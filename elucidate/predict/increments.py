"""1H chemical shifts by published additive methods, with their derivation.

Methods (tables in ``data/``, a source on every row):

* H on sp3 carbon: base value CH3 0.90 / CH2 1.20 / CH 1.50 plus α
  increments (per CH3/CH2/CH), β and γ increments (Curphy–Morrison-type);
  a CH2 between two functional groups by Shoolery's rule
  δ = 0.23 + σA + σB [1]_;
* alkene H: Pascual–Meier–Simon δ = 5.25 + Zgem + Zcis + Ztrans [2]_;
* benzene H: 7.26 + Σ ortho/meta/para increments [3]_;
* heteroaromatic and fused aromatic H: parent value per position plus the
  benzene increments transferred by ring distance (an approximation that
  the derivation states);
* CHO, formate, alkyne H and H on O/N/S: class values with wide ranges.

Where no rule fits, a coarser class value with a larger uncertainty is
used and the derivation says so.

References
----------
.. [1] J. N. Shoolery, technical information bulletin, 1959; the σ values
   as tabulated in spectroscopy handbooks.
.. [2] C. Pascual, J. Meier, W. Simon, Helv. Chim. Acta 1966, 49, 164.
.. [3] J. Beeby, S. Sternhell, T. Hoffmann-Ostenhof, E. Pretsch, W. Simon,
   Anal. Chem. 1973, 45, 1571.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from typing import Any

from elucidate.predict import tables
from elucidate.predict.graph import FALLBACK, HALOGENS, MolGraph, alkyl_subtype, substituent

__all__ = ["Shift", "Site", "NAMES", "lookup", "special_shift", "sp3_shift", "alkene_shift",
           "aromatic_shift", "parent_position", "ring_distances", "hetero_h_shift",
           "aldehyde_shift", "alkyne_shift"]

#: How a class key reads in a derivation.
NAMES: dict[str, str] = {
    "R": "alkyl", "R_ring": "alkyl (in ring)", "R2": "CH2R", "R3": "CHR2", "R4": "CR3",
    "Ar": "aryl", "C=C": "C=C", "C=C_conj": "C=C (conjugated)", "C#C": "C≡C",
    "CHO": "CHO", "COR": "C(=O)R", "COAr": "C(=O)Ar", "COOH": "COOH", "COOR": "C(=O)OR",
    "CONR2": "C(=O)N", "CONR2t": "C(=O)NR2 (tertiary)", "COCl": "C(=O)X", "CN": "C≡N", "C=N": "C=N", "CF3": "CF3",
    "F": "F", "Cl": "Cl", "Br": "Br", "I": "I", "OH": "OH", "OR": "OR", "OAr": "OAr",
    "OCOR": "OC(=O)R", "OCOAr": "OC(=O)Ar", "OSO2R": "OSO2R", "NH2": "NH2/NHR",
    "NR2": "NR2", "NAr": "N–aryl", "NCOR": "N–C(=O)R", "Narom": "N (aromatic ring)",
    "NO2": "NO2", "SH": "SH", "SR": "SR", "SAr": "SAr", "SOR": "S(=O)R", "SO2R": "SO2R",
    "SO2Cl": "SO2Cl", "SiR3": "SiR3", "CH2O": "CH2O", "CH2N": "CH2N", "CH2S": "CH2S",
    "CH2Hal": "CH2–halogen", "CH2CO": "CH2C=O/CN", "CH2Ar": "CH2Ar", "H": "H",
    "other": "unclassified group",
}


@dataclass(frozen=True)
class Shift:
    """A predicted shift, its uncertainty and the terms that make it."""

    shift: float
    uncertainty: float
    derivation: tuple[str, ...]
    label: str
    klass: str
    exchangeable: bool = False


@dataclass(frozen=True)
class Site:
    """H atoms on one heavy atom that share a shift.

    ``cis_item`` (alkene H only): the substituent on the other alkene carbon
    cis to these H — a heavy-atom index, ``-1`` for an H there, or ``None``
    when the geometry is not known.
    """

    atom: int
    h_count: int
    tag: str
    cis_item: int | None = None
    partner: int = -1


def lookup(table: dict[str, Any], key: str) -> tuple[Any, str, bool]:
    """Row for ``key`` or for the nearest coarser class (``FALLBACK``).

    Returns ``(row, key used, fell back?)``; row is ``None`` if nothing fits.
    """
    k = key
    fell = False
    while k not in table:
        if k not in FALLBACK:
            return None, k, True
        k = FALLBACK[k]
        fell = True
    return table[k], k, fell


def _fmt(v: float) -> str:
    return f"{v:+.2f}"


def _special(klass: str, solvent: str | None) -> tuple[Any, str]:
    table = tables.special_h()
    if solvent and (klass, solvent) in table:
        return table[(klass, solvent)], klass
    return table[(klass, "any")], klass


def special_shift(klass: str, label: str, solvent: str | None, kind: str,
                  note: str | None = None) -> Shift:
    """A class value (aldehyde, alkyne, XH, fallbacks) with its range."""
    row, _ = _special(klass, solvent)
    deriv = [
        f"{row['shift']:.2f} class value: {row.text['description']} "
        f"(range {row['low']:.1f}–{row['high']:.1f} ppm; {row.source})"
    ]
    if note:
        deriv.append(note)
    if row["exchangeable"]:
        deriv.append("exchangeable: broad singlet, position depends on solvent, "
                     "concentration and temperature; may be absent")
    return Shift(row["shift"], row["uncertainty"], tuple(deriv), label, kind, bool(row["exchangeable"]))


# --------------------------------------------------------------------- sp3 H


def sp3_shift(g: MolGraph, c: int, subs: dict[tuple[int, int], str]) -> Shift:
    """H on an sp3 carbon ``c``: Curphy–Morrison-type increments or Shoolery."""
    nh = g.hs[c]
    label = {3: "CH3", 2: "CH2", 1: "CH"}.get(nh, "CH4")
    table = tables.sp3_h()
    base = tables.bases()
    col = {3: "alpha_ch3", 2: "alpha_ch2", 1: "alpha_ch"}.get(nh, "alpha_ch3")

    def key(a: int, x: int) -> str:
        k = subs.get((a, x))
        if k is None:
            k = substituent(g, a, x)
            subs[(a, x)] = k
        return k

    alpha = [(x, key(c, x)) for x in g.nbrs[c]]
    func = [(x, k) for x, k in alpha if k != "R"]
    group = label
    if func:
        label = f"{group} next to {', '.join(NAMES.get(k, k) for _, k in func)}"
    notes: list[str] = []
    unc = 0.15
    terms: list[tuple[float, str]] = []

    # Shoolery's rule: CH2 with exactly two substituents, both functional groups;
    # its extension to a methine CHXYZ with two or more functional groups
    # (handbook practice, less accurate: larger uncertainty)
    methine = nh == 1 and len(alpha) == 3 and len(func) >= 2
    if nh == 2 and len(alpha) == 2 and len(func) == 2 or methine:
        if methine:
            unc += 0.25
            func = alpha
        sh = base["shoolery_constant"]["value"]
        terms.append((sh, "Shoolery constant"))
        ok = True
        for _, k in func:
            row, used, fell = lookup(table, k)
            if row is None:
                ok = False
                break
            terms.append((row["shoolery"], f"σ {NAMES.get(used, used)}"))
            if fell:
                notes.append(f"note: no Shoolery σ for {NAMES.get(k, k)}; used {NAMES.get(used, used)}")
                unc += 0.2
        if ok and not methine and all(k.startswith("O") for _, k in func):
            # two O on one CH2: the σ are not additive (acetals, OCH2O)
            terms.append((base["shoolery_two_oxygen"]["value"], "two-oxygen correction"))
            unc += 0.1
        if ok:
            total = sum(v for v, _ in terms)
            deriv = [f"{terms[0][0]:.2f} {terms[0][1]}"] + [f"{_fmt(v)} {t}" for v, t in terms[1:]]
            rule = "Shoolery's rule extended to CHXYZ, δ = 0.23 + Σσ" if methine else "Shoolery's rule, δ = 0.23 + σA + σB"
            deriv.append(f"= {total:.2f} ({rule})")
            return Shift(total, unc + 0.05, tuple(deriv + notes), label, "sp3")
        terms.clear()
        notes.clear()
        func = [(x, k) for x, k in alpha if k != "R"]

    bkey = {3: "sp3_CH3", 2: "sp3_CH2", 1: "sp3_CH"}.get(nh, "sp3_CH3")
    b = base[bkey]["value"]
    if nh == 4:
        b = 0.23
        notes.append("note: methane itself (0.23, from memory)")
    terms.append((b, f"{group} base"))
    for x, k in func:
        row, used, fell = lookup(table, k)
        if row is None:
            notes.append(f"note: no α increment for {NAMES.get(k, k)}; counted as alkyl")
            unc += 0.4
            continue
        terms.append((row[col], f"α-{NAMES.get(used, used)}"))
        if fell:
            notes.append(f"note: no row for {NAMES.get(k, k)}; used {NAMES.get(used, used)}")
            unc += 0.2
    if len(func) >= 2:
        unc += 0.1 * (len(func) - 1)
        notes.append("note: several α groups; additivity is less reliable")

    # β and γ through sp3 carbons; in rings a group is counted once, at its
    # nearest position (the O of an epoxide is α, not also β)
    counted = set(g.nbrs[c])
    counted.add(c)
    beta_atoms = {y for x, k in alpha if k == "R" and g.is_sp3_carbon(x) for y in g.nbrs[x]}
    for x, k in alpha:
        if k != "R" or not g.is_sp3_carbon(x):
            continue
        for y in g.nbrs[x]:
            if y in counted:
                continue
            counted.add(y)
            ky = key(x, y)
            if ky != "R":
                row, used, fell = lookup(table, ky)
                if row is not None and row["beta"]:
                    terms.append((row["beta"], f"β-{NAMES.get(used, used)}"))
                continue
            if not g.is_sp3_carbon(y):
                continue
            for z in g.nbrs[y]:
                if z in counted or z in beta_atoms:
                    continue
                counted.add(z)
                kz = key(y, z)
                if kz != "R":
                    row, used, fell = lookup(table, kz)
                    if row is not None and row["gamma"]:
                        terms.append((row["gamma"], f"γ-{NAMES.get(used, used)}"))

    # ring-size correction (from the parent cycloalkanes) for H on a carbon of
    # a saturated ring (all ring bonds single), added like any other increment
    if g.atom_rings[c]:
        r = min(g.atom_rings[c], key=lambda r: len(g.rings[r]))
        ring = g.rings[r]
        row = tables.sp3_ring_h().get(len(ring))
        if row is not None and all(g.order[a].get(b) == 1 for a, b in zip(ring, ring[1:] + ring[:1])):
            corr = row["correction_ch"] if nh == 1 else row["correction"]
            terms.append((corr, f"{len(ring)}-ring" + (" methine" if nh == 1 else "")))

    total = sum(v for v, _ in terms)
    deriv = [f"{terms[0][0]:.2f} {terms[0][1]}"] + [f"{_fmt(v)} {t}" for v, t in terms[1:]]
    deriv.append(f"= {total:.2f} (Curphy–Morrison-type increments)")
    return Shift(total, unc, tuple(deriv + notes), label, "sp3")


# ------------------------------------------------------------------ alkene H


def _pms_key(g: MolGraph, c: int, x: int, subs: dict[tuple[int, int], str]) -> str:
    k = subs.get((c, x))
    if k is None:
        k = substituent(g, c, x)
        subs[(c, x)] = k
    if k == "R":
        sub = alkyl_subtype(g, c, x)
        if sub in ("R", "R2", "R3", "R4"):
            return "R_ring" if g.same_ring(c, x) else "R"
        return sub
    if k == "C=C":
        d = g.double_partner(x)
        for y in g.nbrs[d] if d >= 0 else ():
            if y != x and (g.arom[y] or g.is_carbonyl_carbon(y) or g.double_partner(y) >= 0):
                return "C=C_conj"
    if k == "OR":
        o_other = [y for y in g.nbrs[x] if y != c]
        if o_other and (g.double_partner(o_other[0]) >= 0):
            return "OAr"
    return k


def alkene_shift(g: MolGraph, c: int, site: Site, subs: dict[tuple[int, int], str]) -> Shift:
    """H on alkene carbon ``c`` (partner ``site.partner``): Pascual–Meier–Simon."""
    table = tables.alkene_h()
    c2 = site.partner
    terms: list[tuple[float, str]] = [(tables.bases()["alkene_base"]["value"], "alkene base")]
    notes: list[str] = []
    unc = 0.2

    def z(x: int, col: str, where: str) -> None:
        nonlocal unc
        k = _pms_key(g, c if where == "gem" else c2, x, subs)
        row, used, fell = lookup(table, k)
        if row is None:
            notes.append(f"note: no Z value for {NAMES.get(k, k)}; omitted")
            unc += 0.4
            return
        if fell:
            notes.append(f"note: no Z value for {NAMES.get(k, k)}; used {NAMES.get(used, used)}")
            unc += 0.2
        terms.append((row[col], f"Z{where}({NAMES.get(used, used)})"))

    for x in g.nbrs[c]:
        if x != c2:
            z(x, "gem", "gem")
    others = [x for x in g.nbrs[c2] if x != c]
    if site.cis_item is None and len(others) == 2:
        # geometry unknown: average of both assignments
        t_before = len(terms)
        z(others[0], "cis", "cis")
        z(others[1], "trans", "trans")
        a = sum(v for v, _ in terms[t_before:])
        del terms[t_before:]
        z(others[1], "cis", "cis")
        z(others[0], "trans", "trans")
        b = sum(v for v, _ in terms[t_before:])
        del terms[t_before:]
        terms.append(((a + b) / 2, "Zcis/Ztrans averaged over E/Z (geometry not given)"))
        unc += abs(a - b) / 2
    elif site.cis_item is None and len(others) == 1:
        x = others[0]
        t_before = len(terms)
        z(x, "cis", "cis")
        a = sum(v for v, _ in terms[t_before:])
        del terms[t_before:]
        z(x, "trans", "trans")
        b = sum(v for v, _ in terms[t_before:])
        del terms[t_before:]
        terms.append(((a + b) / 2, f"Zcis/Ztrans({NAMES.get(_pms_key(g, c2, x, subs), 'group')}) averaged (geometry not given)"))
        unc += abs(a - b) / 2
    else:
        for x in others:
            z(x, "cis" if x == site.cis_item else "trans", "cis" if x == site.cis_item else "trans")
    total = sum(v for v, _ in terms)
    deriv = [f"{terms[0][0]:.2f} {terms[0][1]}"] + [f"{_fmt(v)} {t}" for v, t in terms[1:]]
    deriv.append(f"= {total:.2f} (Pascual–Meier–Simon)")
    label = "=CH2" if g.hs[c] == 2 else "=CH"
    if site.tag:
        label = f"=CH ({site.tag})"
    return Shift(total, unc, tuple(deriv + notes), label, "alkene")


# ---------------------------------------------------------------- aromatic H


@functools.cache
def _templates() -> tuple[tuple[str, Any, dict[int, tuple[float | None, float | None, str]], tuple[int, int, int, int, int]], ...]:
    """Parent ring systems: (name, query mol, {template atom: (h1, c13, source)}, composition)."""
    from rdkit import Chem

    by_name: dict[str, tuple[str, Any, dict[int, tuple[float | None, float | None, str]]]] = {}
    for r in tables.heteroaromatic():
        name = r["name"]
        if name not in by_name:
            mol = Chem.MolFromSmiles(r["template"])
            by_name[name] = (name, mol, {})
        name_, mol, pos = by_name[name]
        idx = next(a.GetIdx() for a in mol.GetAtoms() if a.GetAtomMapNum() == int(r["position"]))
        h1 = float(r["h1"]) if r["h1"] else None
        c13 = float(r["c13"]) if r["c13"] else None
        pos[idx] = (h1, c13, r["source"])
    out = []
    for name, mol, pos in by_name.values():
        comp = _composition([a.GetSymbol() for a in mol.GetAtoms()])
        out.append((name, mol, pos, comp))
    return tuple(out)


def _composition(symbols: list[str]) -> tuple[int, int, int, int, int]:
    return (len(symbols), symbols.count("C"), symbols.count("N"), symbols.count("O"), symbols.count("S"))


def parent_position(g: MolGraph, mol: Any, atom: int,
                    cache: dict[frozenset[int], Any]) -> tuple[str, dict[int, tuple[float | None, float | None, str]], dict[int, int]] | None:
    """Parent ring system of aromatic ``atom``: (name, values, molecule atom → template atom)."""
    system = g.aro_system.get(atom)
    if system is None:
        return None
    if system in cache:
        return cache[system]
    comp = _composition([g.el[a] for a in system])
    found = None
    for name, tmol, pos, tcomp in _templates():
        if tcomp != comp:
            continue
        for match in mol.GetSubstructMatches(tmol, uniquify=False, maxMatches=50):
            if frozenset(match) == system:
                found = (name, pos, {m: t for t, m in enumerate(match)})
                break
        if found:
            break
    cache[system] = found
    return found


def ring_distances(g: MolGraph, system: frozenset[int], start: int) -> dict[int, int]:
    dist = {start: 0}
    frontier = [start]
    while frontier:
        nxt = []
        for a in frontier:
            for b in g.nbrs[a]:
                if b in system and b not in dist:
                    dist[b] = dist[a] + 1
                    nxt.append(b)
        frontier = nxt
    return dist


def _benzene_key(g: MolGraph, a: int, x: int, subs: dict[tuple[int, int], str]) -> str:
    k = subs.get((a, x))
    if k is None:
        k = substituent(g, a, x)
        subs[(a, x)] = k
    if k == "R":
        return alkyl_subtype(g, a, x)
    if k == "SO2R" and any(g.el[y] == "Cl" for y in g.nbrs[x]):
        return "SO2Cl"
    if k == "CONR2" and any(g.el[y] == "N" and not g.hs[y] for y in g.nbrs[x]):
        return "CONR2t"  # a tertiary amide turns out of the ring plane
    return k


_CARBONYL_KEYS = frozenset({"COOR", "COOH", "CONR2", "CONR2t", "COR", "COAr", "CHO"})
#: share of the ortho increment a twisted carbonyl keeps: dimethyl phthalate
#: H-3/6 at 7.72 (from memory) against 8.08 from two full increments
_TWISTED_ORTHO = 0.5


def _crowded_carbonyl(g: MolGraph, a: int, x: int, system: frozenset[int], subs: dict[tuple[int, int], str]) -> bool:
    """Is the open-chain carbonyl substituent ``x`` on ring atom ``a`` flanked
    by another open-chain carbonyl substituent on an ortho ring atom?"""
    if g.same_ring(a, x):
        return False
    for b in g.nbrs[a]:
        if b not in system:
            continue
        for y in g.nbrs[b]:
            if y in system or g.same_ring(b, y):
                continue
            if _benzene_key(g, b, y, subs) in _CARBONYL_KEYS:
                return True
    return False


def aromatic_shift(g: MolGraph, mol: Any, c: int, subs: dict[tuple[int, int], str],
                   cache: dict[frozenset[int], Any]) -> Shift:
    """H on an aromatic carbon: benzene increments or a parent ring value."""
    system = g.aro_system.get(c, frozenset())
    inc = tables.benzene_h()
    notes: list[str] = []
    is_benzene = len(system) == 6 and all(g.el[a] == "C" for a in system)
    if is_benzene:
        base = tables.bases()["benzene_base"]["value"]
        terms: list[tuple[float, str]] = [(base, "benzene base")]
        unc = 0.12
        method = "benzene substituent increments"
        kind = "aromatic"
    else:
        found = parent_position(g, mol, c, cache)
        if found is None or found[1].get(found[2][c], (None,))[0] is None:
            return special_shift("aromatic_other", "ArH", None, "heteroaromatic",
                                 note="note: no parent ring value for this ring system; coarse class value")
        name, pos, amap = found
        h1, _, src = pos[amap[c]]
        assert h1 is not None
        terms = [(h1, f"{name} parent value ({src})")]
        unc = 0.15
        method = "parent ring value + benzene increments transferred by ring distance"
        kind = "heteroaromatic"
    dist = ring_distances(g, system, c)
    pos_name = {1: "ortho", 2: "meta", 3: "para"}
    any_sub = False
    for a in sorted(system):
        d = dist.get(a)
        if d is None or d == 0 or d > 3:
            continue
        for x in g.nbrs[a]:
            if x in system:
                continue
            if g.el[x] == "H":
                continue
            k = _benzene_key(g, a, x, subs)
            row, used, fell = lookup(inc, k)
            col = pos_name[d]
            if row is None:
                notes.append(f"note: no increment for {NAMES.get(k, k)}; omitted")
                unc += 0.2
                continue
            if fell:
                notes.append(f"note: no increment for {NAMES.get(k, k)}; used {NAMES.get(used, used)}")
                unc += 0.1
            value = row[col]
            if col == "ortho" and used in _CARBONYL_KEYS and _crowded_carbonyl(g, a, x, system, subs):
                # two open-chain carbonyl groups side by side turn out of
                # the ring plane and lose most of their ortho deshielding
                value *= _TWISTED_ORTHO
                terms.append((value, f"{col}-{NAMES.get(used, used)} (twisted by an ortho C=O group)"))
            else:
                terms.append((value, f"{col}-{NAMES.get(used, used)}"))
            any_sub = True
    if not is_benzene and any_sub:
        unc += 0.15
        notes.append("note: benzene increments transferred to this ring (approximation)")
    if is_benzene:
        nsub = sum(1 for a in system for x in g.nbrs[a] if x not in system)
        if nsub >= 3:
            unc += 0.05 * (nsub - 2)
    total = sum(v for v, _ in terms)
    deriv = [f"{terms[0][0]:.2f} {terms[0][1]}"] + [f"{_fmt(v)} {t}" for v, t in terms[1:]]
    deriv.append(f"= {total:.2f} ({method})")
    return Shift(total, unc, tuple(deriv + notes), "ArH", kind)


# ------------------------------------------------------------- special H


def hetero_h_shift(g: MolGraph, x: int, solvent: str | None) -> Shift:
    """H on O, N or S: class value by the kind of group, exchangeable."""
    e = g.el[x]
    others = [y for y in g.nbrs[x]]
    if e == "O":
        label = "OH"
        if not others:
            return special_shift("water", "H2O", solvent, "XH")
        y = others[0]
        if g.el[y] == "C":
            if g.arom[y]:
                # an ortho C=O holds the OH in an intramolecular H bond
                for z in g.nbrs[y]:
                    if g.arom[z]:
                        for w in g.nbrs[z]:
                            if w != y and not g.arom[w] and g.is_carbonyl_carbon(w):
                                return special_shift("OH_phenol_chelated", label, solvent, "XH")
                return special_shift("OH_phenol", label, solvent, "XH")
            if g.is_carbonyl_carbon(y):
                return special_shift("OH_acid", label, solvent, "XH")
            if g.double_partner(y) >= 0:
                return special_shift("OH_enol", label, solvent, "XH")
            return special_shift("OH_alcohol", label, solvent, "XH")
        if g.el[y] == "N":
            return special_shift("OH_oxime", label, solvent, "XH")
        return special_shift("OH_other", label, solvent, "XH")
    if e == "N":
        label = "NH2" if g.hs[x] == 2 else "NH"
        if g.arom[x]:
            ring = g.aro_system.get(x, frozenset())
            n_ring_n = sum(1 for a in ring if g.el[a] == "N")
            return special_shift("NH_imidazole" if n_ring_n >= 2 else "NH_pyrrole", label, solvent, "XH")
        if sum(1 for y in others if g.is_carbonyl_carbon(y)) >= 2:
            return special_shift("NH_imide", label, solvent, "XH")
        for y in others:
            if g.is_carbonyl_carbon(y):
                return special_shift("NH_amide", label, solvent, "XH")
            if g.el[y] == "S" and any(g.el[z] == "O" for z in g.nbrs[y]):
                return special_shift("NH_sulfonamide", label, solvent, "XH")
        if any(g.arom[y] for y in others):
            return special_shift("NH_aniline", label, solvent, "XH")
        if all(g.el[y] == "C" and g.is_sp3_carbon(y) for y in others):
            return special_shift("NH_amine", label, solvent, "XH")
        return special_shift("NH_other", label, solvent, "XH")
    if e == "S":
        if others and g.arom[others[0]]:
            return special_shift("SH_thiophenol", "SH", solvent, "XH")
        return special_shift("SH_thiol", "SH", solvent, "XH")
    return special_shift("XH_other", f"{e}H", solvent, "XH")


def aldehyde_shift(g: MolGraph, c: int, solvent: str | None) -> Shift:
    """H on a carbonyl carbon: aldehyde, formate or formamide class value."""
    o = g.double_partner(c)
    others = [y for y in g.nbrs[c] if y != o]
    if not others:
        return special_shift("CHO_R", "CHO", solvent, "aldehyde", note="note: formaldehyde (9.6, from memory)")
    y = others[0]
    if g.el[y] == "O":
        return special_shift("formate", "HC(=O)O", solvent, "aldehyde")
    if g.el[y] == "N":
        return special_shift("formamide", "HC(=O)N", solvent, "aldehyde")
    if g.el[y] == "C":
        if g.arom[y]:
            ortho = [w for z in g.nbrs[y] if g.arom[z] for w in g.nbrs[z]
                     if w != y and not g.arom[w]]
            if ortho and all(g.el[w] != "O" or g.hs[w] == 0 for w in ortho):
                return special_shift("CHO_Ar_ortho", "CHO", solvent, "aldehyde")
            return special_shift("CHO_Ar", "CHO", solvent, "aldehyde")
        if g.double_partner(y) >= 0 or g.triple_partner(y) >= 0:
            return special_shift("CHO_C=C", "CHO", solvent, "aldehyde")
        if g.is_sp3_carbon(y):
            return special_shift("CHO_R", "CHO", solvent, "aldehyde")
    return special_shift("CHO_other", "CHO", solvent, "aldehyde")


def alkyne_shift(g: MolGraph, c: int, solvent: str | None) -> Shift:
    """H on an alkyne carbon: class value by the group on the other end."""
    t = g.triple_partner(c)
    others = [y for y in g.nbrs[t] if y != c]
    if not others:
        return special_shift("alkyne_H", "≡CH", solvent, "alkyne")
    y = others[0]
    if g.el[y] == "C":
        if g.arom[y]:
            return special_shift("alkyne_Ar", "≡CH", solvent, "alkyne")
        if g.is_carbonyl_carbon(y):
            return special_shift("alkyne_CO", "≡CH", solvent, "alkyne")
        if g.double_partner(y) >= 0 or g.triple_partner(y) >= 0:
            return special_shift("alkyne_C=C", "≡CH", solvent, "alkyne")
        if g.is_sp3_carbon(y):
            if any(g.el[z] in HALOGENS or g.el[z] in ("O", "N", "S") for z in g.nbrs[y]):
                return special_shift("alkyne_CH2X", "≡CH", solvent, "alkyne")
            return special_shift("alkyne_R", "≡CH", solvent, "alkyne")
    return special_shift("alkyne_other", "≡CH", solvent, "alkyne")
