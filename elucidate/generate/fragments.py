"""Fragments (super-atoms with open valences) as small gadgets on the unit graph.

A fragment with one open valence (phenyl ``*c1ccccc1``, tert-butyl
``*C(C)(C)C``) becomes one leaf vertex of the skeleton.  A fragment with k >= 2
open valences (``*C(=O)O*``) becomes a *centre* vertex joined to k *port*
vertices; each port has exactly one bond outside the fragment.  Ports that
the fragment's own symmetry exchanges carry the same label, so the
skeleton's automorphism group acts on them exactly as the fragment does
(this needs the fragment to permute such ports freely, which holds for one
or two ports and for most larger cases; other fragments are refused with a
clear message).

After decoration the gadget graph is expanded into atoms.  One molecule can
contain a fragment in more than one place (or in another Kekulé form); the
expansion is kept only when its placement is the canonical one among all
valid placements (smallest canonical SMILES with fragment atoms marked),
in the spirit of McKay's canonical augmentation: no set of outputs is kept.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field
from itertools import combinations, product
from math import factorial

from elucidate.errors import InputError
from elucidate.generate.decorate import Label, Structure, _kekule_forms, structure_mol
from elucidate.generate.spec import FragmentSpec, Spec

__all__ = ["FragmentPlan", "Fragment", "plan_fragments"]


@dataclass(frozen=True)
class Fragment:
    """A parsed fragment.

    Attributes
    ----------
    elements, hs, charges : tuple
        Per fragment atom (heavy atoms in SMILES order).
    bonds : tuple of (int, int, int)
        Internal bonds (i, j, Kekulé order).
    ports : tuple of (int, int)
        Open valences: (anchor atom, bond order), in SMILES order.
    port_class : tuple of int
        Symmetry class of each port (equal = exchanged by the fragment's symmetry).
    """

    spec: FragmentSpec
    elements: tuple[str, ...]
    hs: tuple[int, ...]
    charges: tuple[int, ...]
    bonds: tuple[tuple[int, int, int], ...]
    ports: tuple[tuple[int, int], ...]
    port_class: tuple[int, ...]

    @property
    def degree(self) -> tuple[int, ...]:
        d = [0] * len(self.elements)
        for i, j, _ in self.bonds:
            d[i] += 1
            d[j] += 1
        for a, _ in self.ports:
            d[a] += 1
        return tuple(d)


@functools.cache
def _parse_fragment(fs: FragmentSpec) -> Fragment:
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    try:
        mol = Chem.MolFromSmiles(fs.smiles)
        if mol is not None:
            Chem.Kekulize(mol, clearAromaticFlags=True)
    except Exception as err:  # RDKit raises its own KekulizeException
        raise InputError(f"fragment {fs.smiles!r}: cannot assign bond orders ({err})") from err
    finally:
        RDLogger.EnableLog("rdApp.*")
    if mol is None:
        raise InputError(f"fragment {fs.smiles!r}: not a valid SMILES")
    heavy = [a.GetIdx() for a in mol.GetAtoms() if a.GetAtomicNum() != 0]
    pos = {idx: k for k, idx in enumerate(heavy)}
    if not heavy:
        raise InputError(f"fragment {fs.smiles!r}: has no atoms besides '*'")
    ports = []
    dummy_atoms = []
    for a in mol.GetAtoms():
        if a.GetAtomicNum() == 0:
            nb = a.GetNeighbors()
            if len(nb) != 1 or nb[0].GetAtomicNum() == 0:
                raise InputError(f"fragment {fs.smiles!r}: each '*' must be bonded to one fragment atom")
            b = mol.GetBondBetweenAtoms(a.GetIdx(), nb[0].GetIdx())
            ports.append((pos[nb[0].GetIdx()], int(b.GetBondTypeAsDouble())))
            dummy_atoms.append(a.GetIdx())
    elements = tuple(mol.GetAtomWithIdx(i).GetSymbol() for i in heavy)
    for el in elements:
        if el not in ("C", "N", "O", "S", "P", "F", "Cl", "Br", "I", "Si"):
            raise InputError(f"fragment {fs.smiles!r}: element {el!r} is not supported")
    hs = tuple(mol.GetAtomWithIdx(i).GetTotalNumHs() for i in heavy)
    charges = tuple(mol.GetAtomWithIdx(i).GetFormalCharge() for i in heavy)
    if sum(charges):
        raise InputError(f"fragment {fs.smiles!r}: must be neutral")
    bonds = tuple(
        sorted(
            (min(pos[b.GetBeginAtomIdx()], pos[b.GetEndAtomIdx()]),
             max(pos[b.GetBeginAtomIdx()], pos[b.GetEndAtomIdx()]),
             int(b.GetBondTypeAsDouble()))
            for b in mol.GetBonds()
            if b.GetBeginAtom().GetAtomicNum() and b.GetEndAtom().GetAtomicNum()
        )
    )
    for k in fs.neighbour_h:
        if not 0 <= k < len(heavy):
            raise InputError(f"fragment {fs.smiles!r}: neighbour_h names atom {k}, which it does not have")
    # port symmetry classes from the fragment's automorphisms
    autos = mol.GetSubstructMatches(mol, uniquify=False, useChirality=False, maxMatches=100000)
    dpos = {d: k for k, d in enumerate(dummy_atoms)}
    perms = {tuple(dpos[m[d]] for d in dummy_atoms) for m in autos}
    cls = list(range(len(ports)))
    for p in perms:
        for k, q in enumerate(p):
            a, b = cls[k], cls[q]
            if a != b:
                lo, hi = min(a, b), max(a, b)
                cls = [lo if c == hi else c for c in cls]
    renum = {c: i for i, c in enumerate(sorted(set(cls)))}
    port_class = tuple(renum[c] for c in cls)
    full = 1
    for c in set(port_class):
        full *= factorial(port_class.count(c))
    if len(perms) != full:
        raise InputError(
            f"fragment {fs.smiles!r}: the symmetry of its open valences is not supported; "
            "split it into smaller fragments"
        )
    return Fragment(fs, elements, hs, charges, bonds, tuple(ports), port_class)


@dataclass
class FragmentPlan:
    """How the fragments of a spec enter the search.

    Attributes
    ----------
    units : bool
        Any fragments at all.
    unit_labels : list of (Label, count)
        Gadget labels to add to each label multiset.
    element_counts : dict
        Atoms and H the fragments take from the formula.
    """

    units: bool = False
    unit_labels: list[tuple[Label, int]] = field(default_factory=list)
    element_counts: dict[str, int] = field(default_factory=dict)
    internal_extra: int = 0
    classes: list[tuple[Fragment, int]] = field(default_factory=list)

    def expand(self, st: Structure, spec: Spec) -> Structure | None:
        """The atom-level structure of a decorated gadget graph, or None when
        it breaks a check or is not the canonical placement."""
        return _expand(self, st, spec)


def plan_fragments(spec: Spec) -> FragmentPlan:
    """Parse the fragments and check that atoms and fragments fit the formula."""
    f = spec.formula.as_dict()
    plan = FragmentPlan()
    classes: dict[FragmentSpec, int] = {}
    for fs in spec.fragments:
        classes[fs] = classes.get(fs, 0) + 1
    used: dict[str, int] = {}
    for ci, (fs, r) in enumerate(classes.items()):
        frag = _parse_fragment(fs)
        plan.classes.append((frag, r))
        for el, h in zip(frag.elements, frag.hs):
            used[el] = used.get(el, 0) + r
            used["H"] = used.get("H", 0) + r * h
        k = len(frag.ports)
        if k == 0:
            raise InputError(f"fragment {fs.smiles!r}: needs at least one open valence '*'")
        if k == 1:
            a, o = frag.ports[0]
            plan.unit_labels.append(
                (Label("*", 0, o, o, o, (), ci, 0, 1, frag.elements[a], frag.hs[a]), r)
            )
        else:
            plan.unit_labels.append((Label("*", 0, k, k, k, (), ci, -1, k), r))
            for pc in sorted(set(frag.port_class)):
                members = [i for i, c in enumerate(frag.port_class) if c == pc]
                a, o = frag.ports[members[0]]
                plan.unit_labels.append(
                    (
                        Label("*", 0, 1 + o, 1 + o, 1 + o, (), ci, pc, 2, frag.elements[a], frag.hs[a]),
                        r * len(members),
                    )
                )
    plan.units = bool(classes)
    plan.element_counts = used
    if spec.atoms is not None:
        got = dict(used)
        for a in spec.atoms:
            got[a.element] = got.get(a.element, 0) + 1
            got["H"] = got.get("H", 0) + a.h_count
        if {k: v for k, v in got.items() if v} != {k: v for k, v in f.items() if v}:
            raise InputError(f"atom specs and fragments do not add up to the formula {spec.formula.hill}")
    else:
        for el, k in used.items():
            if k > f.get(el, 0):
                raise InputError(f"fragments need more {el} than the formula {spec.formula.hill} has")
    return plan


def _centre_classes(frag: Fragment) -> dict[int, int]:
    out: dict[int, int] = {}
    for pc in frag.port_class:
        out[pc] = out.get(pc, 0) + 1
    return out


def _expand(plan: FragmentPlan, st: Structure, spec: Spec) -> Structure | None:
    n = len(st.labels)
    nbrs: list[list[int]] = [[] for _ in range(n)]
    for u, v in st.edges:
        nbrs[u].append(v)
        nbrs[v].append(u)
    # centre port-class counts must match the fragment exactly
    for v, lab in enumerate(st.labels):
        if lab.is_unit and lab.port < 0:
            frag = plan.classes[lab.unit][0]
            got: dict[int, int] = {}
            for w in nbrs[v]:
                got[st.labels[w].port] = got.get(st.labels[w].port, 0) + 1
            if got != _centre_classes(frag):
                return None
    atoms: list[Label] = []
    vmap: dict[int, int] = {}  # free-atom vertex or port vertex -> atom index
    placement: list[tuple[int, tuple[int, ...]]] = []  # (class, atom indices)
    frag_atoms: list[tuple[int, int, int]] = []  # (class, fragment atom, atom idx)
    for v, lab in enumerate(st.labels):
        if not lab.is_unit:
            vmap[v] = len(atoms)
            atoms.append(lab)
    bonds: list[tuple[int, int, int]] = []
    for v, lab in enumerate(st.labels):
        if not lab.is_unit or (lab.degree == 2 and lab.port >= 0):
            continue
        frag = plan.classes[lab.unit][0]
        base = len(atoms)
        for i, el in enumerate(frag.elements):
            val = frag.hs[i] + sum(o for a, b, o in frag.bonds if i in (a, b)) + sum(
                o for a, o in frag.ports if a == i
            )
            atoms.append(Label(el, frag.charges[i], val, val - frag.hs[i], val - frag.hs[i]))
            frag_atoms.append((lab.unit, i, base + i))
        placement.append((lab.unit, tuple(range(base, base + len(frag.elements)))))
        for a, b, o in frag.bonds:
            bonds.append((base + a, base + b, o))
        if lab.degree == 1 and lab.port >= 0:  # one-port fragment
            vmap[v] = base + frag.ports[0][0]
        else:
            ports = sorted(nbrs[v])
            for pc in sorted(set(frag.port_class)):
                dummies = [k for k, c in enumerate(frag.port_class) if c == pc]
                pv = [w for w in ports if st.labels[w].port == pc]
                for k, w in zip(dummies, pv):
                    vmap[w] = base + frag.ports[k][0]
    for (u, v), o in zip(st.edges, st.orders):
        lu, lv = st.labels[u], st.labels[v]
        if (lu.is_unit and lu.port < 0) or (lv.is_unit and lv.port < 0):
            continue  # centre-port gadget edge
        a, b = vmap[u], vmap[v]
        if a == b:
            return None
        bonds.append((min(a, b), max(a, b), o))
    bonds.sort()
    if len({(a, b) for a, b, _ in bonds}) != len(bonds):
        return None  # two open valences of one fragment on the same neighbour pair
    out = Structure(tuple(atoms), tuple((a, b) for a, b, _ in bonds), tuple(o for _, _, o in bonds))
    if not _atom_checks(out, spec):
        return None
    if not _frag_nh_ok(out, plan, frag_atoms):
        return None
    if not _canonical_placement(out, plan, spec, placement):
        return None
    return out


def _carbon_h_sums(st: Structure) -> list[int]:
    hs = st.hs()
    s = [0] * len(st.labels)
    for u, v in st.edges:
        if st.labels[v].symbol == "C":
            s[u] += hs[v]
        if st.labels[u].symbol == "C":
            s[v] += hs[u]
    return s


def _frag_nh_ok(st: Structure, plan: FragmentPlan, frag_atoms: list[tuple[int, int, int]]) -> bool:
    sums = _carbon_h_sums(st)
    for ci, i, idx in frag_atoms:
        allowed = plan.classes[ci][0].spec.neighbour_h.get(i)
        if allowed is not None and sums[idx] not in allowed:
            return False
    return True


def _ring_sizes(st: Structure) -> list[int]:
    """Smallest ring through each bond (0 for none)."""
    n = len(st.labels)
    nbrs: list[list[int]] = [[] for _ in range(n)]
    for u, v in st.edges:
        nbrs[u].append(v)
        nbrs[v].append(u)
    out = []
    for u, v in st.edges:
        dist = {u: 0}
        todo = [u]
        for a in todo:
            for b in nbrs[a]:
                if (a, b) in ((u, v), (v, u)) or b in dist:
                    continue
                dist[b] = dist[a] + 1
                todo.append(b)
        out.append(dist[v] + 1 if v in dist else 0)
    return out


def _atom_checks(st: Structure, spec: Spec) -> bool:
    """Options checked on the expanded atoms (fragment searches only)."""
    o = spec.options
    if o.no_small_rings or o.max_ring_size or o.min_ring_triple:
        rings = _ring_sizes(st)
        if o.no_small_rings and any(0 < r < 5 for r in rings):
            return False
        if o.max_ring_size and any(r > o.max_ring_size for r in rings):
            return False
        if o.min_ring_triple and any(
            od == 3 and 0 < r < o.min_ring_triple for r, od in zip(rings, st.orders)
        ):
            return False
    if o.no_cumulenes:
        dbl = [0] * len(st.labels)
        for (u, v), od in zip(st.edges, st.orders):
            if od == 2:
                dbl[u] += 1
                dbl[v] += 1
        if any(d > 1 and lab.symbol == "C" for d, lab in zip(dbl, st.labels)):
            return False
    if o.no_hetero_hetero:
        for (u, v), od in zip(st.edges, st.orders):
            lu, lv = st.labels[u], st.labels[v]
            if od == 1 and lu.hetero and lv.hetero and not (lu.charge and lv.charge):
                return False
    return True


@functools.cache
def _query(frag: Fragment):  # type: ignore[no-untyped-def]
    """SMARTS query of the fragment atoms (exact H, degree, Kekulé bond orders);
    every bond is written as a ring closure so atom i of the query is
    fragment atom i."""
    from rdkit import Chem

    deg = frag.degree
    parts = []
    for i, (el, h, ch, d) in enumerate(zip(frag.elements, frag.hs, frag.charges, deg)):
        z = Chem.GetPeriodicTable().GetAtomicNumber(el)
        txt = f"[#{z};H{h};D{d};{ch:+d}]"
        for k, (a, b, o) in enumerate(frag.bonds):
            if i in (a, b):
                txt += "-=#"[o - 1] + f"%{k + 10}"
        parts.append(txt)
    q = Chem.MolFromSmarts(".".join(parts))
    if q is None:
        raise InputError(f"fragment {frag.spec.smiles!r}: could not build its query")
    return q


def _kekule_mol(st: Structure, orders: tuple[int, ...], isotopes: dict[int, int] | None = None):  # type: ignore[no-untyped-def]
    from rdkit import Chem

    bt = (None, Chem.BondType.SINGLE, Chem.BondType.DOUBLE, Chem.BondType.TRIPLE)
    rw = Chem.RWMol()
    hs = st.hs()
    for i, (lab, h) in enumerate(zip(st.labels, hs)):
        a = Chem.Atom(lab.symbol)
        a.SetNoImplicit(True)
        a.SetNumExplicitHs(h)
        a.SetFormalCharge(lab.charge)
        if isotopes and i in isotopes:
            a.SetIsotope(isotopes[i])
        rw.AddAtom(a)
    for (u, v), o in zip(st.edges, orders):
        rw.AddBond(u, v, bt[o])
    m = rw.GetMol()
    m.UpdatePropertyCache(strict=False)
    Chem.FastFindRings(m)
    return m


def _valid_placements(
    st: Structure, orders: tuple[int, ...], plan: FragmentPlan, spec: Spec
) -> list[tuple[tuple[int, frozenset[int]], ...]]:
    from elucidate.generate.decorate import _bipartite

    m = _kekule_mol(st, orders)
    per_class = []
    for frag, r in plan.classes:
        maps = m.GetSubstructMatches(_query(frag), uniquify=False, maxMatches=100000)
        by_set: dict[frozenset[int], list[tuple[int, ...]]] = {}
        for mp in maps:
            by_set.setdefault(frozenset(mp), []).append(mp)
        per_class.append((frag, r, by_set))
    other = Structure(st.labels, st.edges, orders)
    sums = _carbon_h_sums(other)
    hs = other.hs()
    out = []
    choices = [list(combinations(sorted(by_set, key=sorted), r)) for _, r, by_set in per_class]
    for combo in product(*choices):
        used: set[int] = set()
        ok = True
        for sets in combo:
            for s in sets:
                if used & s:
                    ok = False
                used |= s
        if not ok:
            continue
        # fragment neighbour-H constraints: some mapping of each placed set works
        for (frag, _, by_set), sets in zip(per_class, combo):
            if not frag.spec.neighbour_h:
                continue
            for s in sets:
                if not any(
                    all(sums[mp[i]] in allowed for i, allowed in frag.spec.neighbour_h.items())
                    for mp in by_set[s]
                ):
                    ok = False
        if not ok:
            continue
        if spec.atoms is not None:
            rest = [i for i in range(len(st.labels)) if i not in used]
            groups: dict[tuple[str, int], list[int]] = {}
            for i in rest:
                groups.setdefault((st.labels[i].symbol, hs[i]), []).append(sums[i])
            want: dict[tuple[str, int], list[frozenset[int] | None]] = {}
            for a in spec.atoms:
                want.setdefault((a.element, a.h_count), []).append(a.neighbour_h)
            if {k: len(v) for k, v in groups.items()} != {k: len(v) for k, v in want.items()}:
                continue
            if not all(_bipartite(groups[k], tuple(want[k])) for k in groups):
                continue
        out.append(tuple((ci, s) for ci, sets in enumerate(combo) for s in sets))
    return out


def _canonical_placement(
    st: Structure, plan: FragmentPlan, spec: Spec, placement: list[tuple[int, tuple[int, ...]]]
) -> bool:
    from rdkit import Chem

    mol = structure_mol(st)
    arom = [j for j, b in enumerate(mol.GetBonds()) if b.GetIsAromatic() and st.orders[j] < 3]
    forms = [st.orders]
    if len(arom) >= 2:
        need: dict[int, int] = {}
        for j in arom:
            u, v = st.edges[j]
            need.setdefault(u, 0)
            need.setdefault(v, 0)
            if st.orders[j] == 2:
                need[u] += 1
                need[v] += 1
        smiles = Chem.MolToSmiles(mol)
        for alt in _kekule_forms(st.edges, arom, need):
            y = list(st.orders)
            for j, d in zip(arom, alt):
                y[j] = 1 + d
            yt = tuple(y)
            if yt == st.orders:
                continue
            if Chem.MolToSmiles(structure_mol(Structure(st.labels, st.edges, yt))) == smiles:
                forms.append(yt)
    pairs = []
    for orders in forms:
        for pl in _valid_placements(st, orders, plan, spec):
            pairs.append((orders, pl))
    if len(pairs) <= 1:
        return True

    def key(orders: tuple[int, ...], pl: tuple[tuple[int, frozenset[int]], ...]) -> str:
        iso = {a: 1 + ci for ci, s in pl for a in s}
        return Chem.MolToSmiles(_kekule_mol(st, orders, iso), kekuleSmiles=True)

    mine = key(st.orders, tuple((ci, frozenset(idx)) for ci, idx in placement))
    return all(mine <= key(o, pl) for o, pl in pairs)
