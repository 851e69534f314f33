"""What to generate: the formula, optional fixed atoms and fragments, filters, limits."""

from __future__ import annotations

from dataclasses import dataclass, field

from elucidate.model import Formula

__all__ = ["Options", "AtomSpec", "FragmentSpec", "Spec", "Limits", "Stats"]


@dataclass(frozen=True)
class Options:
    """Chemistry switches and filters (all off by default: no strain filter).

    Parameters
    ----------
    hypervalent_s : bool
        Also allow S(IV) and S(VI) (sulfoxides, sulfones, sulfonic acids);
        such S carries no H.
    pentavalent_p : bool
        Also allow P(V) with at most one H (phosphates, phosphine oxides,
        H-phosphonates).
    charge_separated : bool
        Also allow N+ bonded to one O- (nitro groups, N-oxides, nitrones);
        the molecule stays neutral.
    no_small_rings : bool
        No 3- or 4-membered rings.
    no_cumulenes : bool
        No carbon atom with two double bonds (allenes, cumulenes, ketenes,
        isocyanates, CO2).
    no_hetero_hetero : bool
        No single bond between two heteroatoms (O-O, N-O, N-N, S-S ...);
        double bonds such as N=N or S=O stay allowed.
    min_ring_triple : int
        A triple bond may lie only in rings of at least this size (0 = no
        limit).  The stage contract listed 8 as default; the issue asks for
        no strain filter by default, so the default is 0 and the CLI offers
        ``--min-ring-triple 8``.
    max_ring_size : int or None
        Every ring bond lies on a ring of at most this size.
    """

    hypervalent_s: bool = False
    pentavalent_p: bool = False
    charge_separated: bool = False
    no_small_rings: bool = False
    no_cumulenes: bool = False
    no_hetero_hetero: bool = False
    min_ring_triple: int = 0
    max_ring_size: int | None = None


@dataclass(frozen=True)
class AtomSpec:
    """One heavy atom with a fixed number of H.

    Parameters
    ----------
    element : str
        Element symbol, e.g. ``"C"``.
    h_count : int
        Number of H on this atom.
    neighbour_h : frozenset of int, optional
        Allowed values of the total number of H on the *carbon* atoms bonded
        to this one (from an n+1 multiplicity).  None: no constraint.
    label : str
        Free text for the caller (e.g. the peak it comes from).
    """

    element: str
    h_count: int
    neighbour_h: frozenset[int] | None = None
    label: str = ""


@dataclass(frozen=True)
class FragmentSpec:
    """A substructure placed once, with open valences marked by ``*``.

    Parameters
    ----------
    smiles : str
        E.g. ``"*c1ccccc1"`` (phenyl), ``"*C(=O)O*"`` (ester link).  The H
        of each fragment atom are those the SMILES implies; a fragment atom
        bonds outside the fragment only where a ``*`` is.
    neighbour_h : dict of int to frozenset of int
        Per fragment atom index (heavy atoms in SMILES order, dummies not
        counted): allowed totals of H on bonded carbon atoms.
    label : str
        Free text for the caller.
    """

    smiles: str
    neighbour_h: dict[int, frozenset[int]] = field(default_factory=dict)
    label: str = ""

    def __hash__(self) -> int:
        return hash((self.smiles, tuple(sorted(self.neighbour_h.items())), self.label))


@dataclass(frozen=True)
class Spec:
    """A generation problem.

    Parameters
    ----------
    formula : Formula
        Molecular formula of every output.
    atoms : tuple of AtomSpec, optional
        None: plain formula enumeration (H placed freely).  Otherwise the
        exact multiset of heavy atoms outside the fragments, each with its H.
    fragments : tuple of FragmentSpec
        Substructures, each placed once.
    require : tuple of str
        SMARTS every output contains.
    forbid : tuple of str
        SMARTS no output contains.
    options : Options
        Chemistry switches and filters.
    checks : tuple
        Further tests on each finished structure before it is written out:
        objects with ``admits_structure(structure) -> bool`` (the solver
        passes its evidence constraints, see :mod:`elucidate.constrain.evidence`).
        They must be hashable and deterministic.
    """

    formula: Formula
    atoms: tuple[AtomSpec, ...] | None = None
    fragments: tuple[FragmentSpec, ...] = ()
    require: tuple[str, ...] = ()
    forbid: tuple[str, ...] = ()
    options: Options = Options()
    checks: tuple = ()


@dataclass(frozen=True)
class Limits:
    """Stop a search early.

    Parameters
    ----------
    max_structures : int, optional
        Stop after this many structures.
    time_limit_s : float, optional
        Stop after this many seconds of wall time.
    """

    max_structures: int | None = None
    time_limit_s: float | None = None


@dataclass
class Stats:
    """Counters filled in by a search.

    Attributes
    ----------
    visited : int
        Partial structures examined: candidate skeleton extensions, partial
        element assignments and partial bond-order assignments.  Compare a
        run with and without a constraint to see the pruning.
    skeletons : int
        Skeleton graphs (or unit graphs) decorated.
    colourings : int
        Element assignments (orbit representatives) that reached bond orders.
    bond_graphs : int
        Bond-order graphs (orbit representatives) completed.
    emitted : int
        Structures emitted.
    rejected_by_checks : int
        Finished structures turned down by ``Spec.checks``.
    stopped_by : str or None
        ``"max_structures"`` or ``"time_limit"`` when a limit stopped the run.
    """

    visited: int = 0
    skeletons: int = 0
    colourings: int = 0
    bond_graphs: int = 0
    emitted: int = 0
    rejected_by_checks: int = 0
    stopped_by: str | None = None

    def add(self, other: "Stats") -> None:
        """Add another run's counters to this one (for split searches)."""
        self.visited += other.visited
        self.skeletons += other.skeletons
        self.colourings += other.colourings
        self.bond_graphs += other.bond_graphs
        self.emitted += other.emitted
        self.rejected_by_checks += other.rejected_by_checks
        self.stopped_by = self.stopped_by or other.stopped_by

    def to_json(self) -> dict[str, object]:
        return {
            "visited": self.visited,
            "skeletons": self.skeletons,
            "colourings": self.colourings,
            "bond_graphs": self.bond_graphs,
            "emitted": self.emitted,
            "rejected_by_checks": self.rejected_by_checks,
            "stopped_by": self.stopped_by,
        }
