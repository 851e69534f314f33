"""Hand-made :class:`SolveResult` records for the report tests.

The observed spectra are literature values; the predictions are worked by
hand from the additive sp3 C–H increments in
the design notes' list of check values (shared/reference/trade-facts.md) (base CH3 0.9, CH2 1.2; α/β increments
as listed there), the way the predict stage derives them.  They stand in for
the solver's output so the report can be built and tested on its own.
"""

from __future__ import annotations

from elucidate.model import (
    Assignment,
    C13Signal,
    Candidate,
    Coupling,
    Environment,
    Formula,
    H1Signal,
    Prediction,
    Problem,
    Rejection,
    SolveResult,
)

__all__ = ["ethyl_acetate_result", "ethyl_benzoate_result", "empty_result"]


def _env(index, atoms, h, shift, mult, couplings=(), label="", derivation=(), exchangeable=False):
    return Environment(
        index=index,
        atoms=tuple(atoms),
        h_count=h,
        shift=shift,
        uncertainty=0.2,
        multiplicity=mult,
        couplings=tuple(couplings),
        exchangeable=exchangeable,
        diastereotopic=False,
        label=label,
        derivation=tuple(derivation),
    )


def _assign(env: Environment, signal: int | None, problem: Problem) -> Assignment:
    obs = problem.h1[signal] if signal is not None else None
    return Assignment(
        environment=env.index,
        signal=signal,
        h_count=env.h_count,
        predicted=env.shift,
        observed=obs.shift if obs else None,
        deviation=round(env.shift - obs.shift, 4) if obs else None,
        multiplicity_predicted=env.multiplicity,
        multiplicity_observed=obs.multiplicity if obs else None,
        cost=abs(env.shift - obs.shift) if obs else 0.0,
    )


def _h1(shift, mult, j, h, text, low=None, high=None):
    return H1Signal(
        shift=shift,
        shift_low=shift if low is None else low,
        shift_high=shift if high is None else high,
        multiplicity=mult,
        couplings=tuple(j),
        h_count=h,
        integral=h,
        text=text,
    )


# Ethyl acetate in CDCl3: 4.12 (q, J 7.1, 2H), 2.05 (s, 3H), 1.26 (t, J 7.1, 3H);
# 13C 171.4, 60.5, 21.0, 14.2.  Source: Gottlieb, Kotlyar, Nudelman,
# J. Org. Chem. 1997, 62, 7512, tables of common impurities (from memory).
def _ethyl_acetate_problem() -> Problem:
    return Problem(
        formula=Formula((("C", 4), ("H", 8), ("O", 2))),
        h1=(
            _h1(4.12, "q", (7.1,), 2, "4.12 (q, J = 7.1 Hz, 2H)"),
            _h1(2.05, "s", (), 3, "2.05 (s, 3H)"),
            _h1(1.26, "t", (7.1,), 3, "1.26 (t, J = 7.1 Hz, 3H)"),
        ),
        c13=(C13Signal(171.4), C13Signal(60.5), C13Signal(21.0), C13Signal(14.2)),
        solvent="CDCl3",
        field_mhz=400.0,
        name="Sample EA-1 (demo)",
        description="Volatile solvent residue from a teaching-lab still (invented scenario).",
    )


def ethyl_acetate_result() -> SolveResult:
    """C4H8O2 with ethyl acetate first and methyl propanoate as a poor fit."""
    problem = _ethyl_acetate_problem()
    # Ethyl acetate, RDKit canonical atom order: C0 C1 O2 C3 C4 O5.
    ea_envs = (
        _env(0, (1,), 2, 4.00, "q", (Coupling(1, 3, 7.0, "vicinal sp3"),), "OCH2",
             ("1.20 base CH2", "+2.80 α-OC(=O)R", "= 4.00")),
        _env(1, (0,), 3, 1.40, "t", (Coupling(0, 2, 7.0, "vicinal sp3"),), "CH3",
             ("0.90 base CH3", "+0.50 β-OC(=O)R", "= 1.40")),
        _env(2, (4,), 3, 2.00, "s", (), "C(=O)CH3",
             ("0.90 base CH3", "+1.10 α-C(=O)OR", "= 2.00")),
    )
    ea_pred = Prediction("CCOC(C)=O", ea_envs)
    ea = Candidate(
        rank=1,
        smiles="CCOC(C)=O",
        score=0.39,
        verdict="consistent",
        assignments=(
            _assign(ea_envs[0], 0, problem),
            _assign(ea_envs[2], 1, problem),
            _assign(ea_envs[1], 2, problem),
        ),
        notes=("every signal within its predicted range",),
        prediction=ea_pred,
    )
    # Methyl propanoate, RDKit canonical atom order: C0 C1 C2 O3 O4 C5.
    mp_envs = (
        _env(0, (5,), 3, 3.70, "s", (), "OCH3", ("0.90 base CH3", "+2.80 α-OC(=O)R", "= 3.70")),
        _env(1, (1,), 2, 2.30, "q", (Coupling(2, 3, 7.0, "vicinal sp3"),), "CH2",
             ("1.20 base CH2", "+1.10 α-C(=O)OR", "= 2.30")),
        _env(2, (0,), 3, 1.20, "t", (Coupling(1, 2, 7.0, "vicinal sp3"),), "CH3",
             ("0.90 base CH3", "+0.30 β-C(=O)OR", "= 1.20")),
    )
    mp = Candidate(
        rank=2,
        smiles="CCC(=O)OC",
        score=3.53,
        verdict="poor fit",
        assignments=(
            _assign(mp_envs[1], 0, problem),
            _assign(mp_envs[0], 1, problem),
            _assign(mp_envs[2], 2, problem),
        ),
        notes=("the 2H quartet at 4.12 is 1.82 ppm from the predicted CH2 at 2.30",),
        prediction=Prediction("CCC(=O)OC", mp_envs),
    )
    rejected = (
        Rejection("CCCC(=O)O", ("needs a CH3 singlet (2.05, 3H): every CH3 has vicinal H",)),
        Rejection("C1COCCO1", ("needs a CH3 triplet (1.26, 3H): no CH3 in the structure",)),
        Rejection("CC(C)C(=O)O", ("needs a 2H quartet (4.12): no CH2 with three vicinal H",)),
    )
    return SolveResult(
        problem=problem,
        complete=True,
        candidates=(ea, mp),
        rejected=rejected,
        # 122 constitutional isomers of C4H8O2 (trade-facts.md, independent
        # exhaustive count): 2 candidates + 120 rejected.
        rejected_counts=(
            ("no CH3 singlet possible", 71),
            ("no CH3 triplet possible", 37),
            ("no CH2 quartet possible", 12),
        ),
        counts=(("generated", 122), ("candidates", 2), ("rejected", 120)),
        elapsed_s=0.8,
    )


# Ethyl benzoate in CDCl3 (from memory): 8.05 (d, J 7.6, 2H), 7.54 (t, J 7.4, 1H),
# 7.43 (t, J 7.6, 2H), 4.38 (q, J 7.1, 2H), 1.39 (t, J 7.1, 3H).
def ethyl_benzoate_result() -> SolveResult:
    """C9H10O2 with an aromatic ring: more signals, more colours, a range."""
    problem = Problem(
        formula=Formula((("C", 9), ("H", 10), ("O", 2))),
        h1=(
            _h1(8.05, "d", (7.6,), 2, "8.05 (d, J = 7.6 Hz, 2H)"),
            _h1(7.54, "t", (7.4,), 1, "7.54 (t, J = 7.4 Hz, 1H)"),
            _h1(7.43, "m", (), 2, "7.46–7.40 (m, 2H)", low=7.40, high=7.46),
            _h1(4.38, "q", (7.1,), 2, "4.38 (q, J = 7.1 Hz, 2H)"),
            _h1(1.39, "t", (7.1,), 3, "1.39 (t, J = 7.1 Hz, 3H)"),
        ),
        solvent="CDCl3",
        field_mhz=400.0,
    )
    # CCOC(=O)c1ccccc1: C0 C1 O2 C3 O4 c5 c6 c7 c8 c9 c10
    envs = (
        # couplings count the partners of ONE H of the set: an ortho H has one
        # vicinal (meta) neighbour, a meta H one ortho and one para, para two meta.
        _env(0, (6, 10), 2, 7.97, "d", (Coupling(1, 1, 7.8, "ortho"),), "ArH ortho",
             ("7.26 benzene", "+0.71 ortho-COOR", "= 7.97")),
        _env(1, (7, 9), 2, 7.37, "t", (Coupling(0, 1, 7.8, "ortho"), Coupling(2, 1, 7.8, "ortho")),
             "ArH meta", ("7.26 benzene", "+0.11 meta-COOR", "= 7.37")),
        _env(2, (8,), 1, 7.47, "t", (Coupling(1, 2, 7.8, "ortho"),), "ArH para",
             ("7.26 benzene", "+0.21 para-COOR", "= 7.47")),
        _env(3, (1,), 2, 4.00, "q", (Coupling(4, 3, 7.0, "vicinal sp3"),), "OCH2",
             ("1.20 base CH2", "+2.80 α-OC(=O)R", "= 4.00")),
        _env(4, (0,), 3, 1.40, "t", (Coupling(3, 2, 7.0, "vicinal sp3"),), "CH3",
             ("0.90 base CH3", "+0.50 β-OC(=O)R", "= 1.40")),
    )
    cand = Candidate(
        rank=1,
        smiles="CCOC(=O)c1ccccc1",
        score=0.61,
        verdict="consistent",
        assignments=(
            _assign(envs[0], 0, problem),
            _assign(envs[2], 1, problem),
            _assign(envs[1], 2, problem),
            _assign(envs[3], 3, problem),
            _assign(envs[4], 4, problem),
        ),
        prediction=Prediction("CCOC(=O)c1ccccc1", envs),
    )
    return SolveResult(
        problem=problem,
        complete=False,
        candidates=(cand,),
        stopped_by="time limit",
        relaxed=("multiplicity of the 7.43 signal treated as m",),
        counts=(("generated", 5000),),
        warnings=("integrals rescaled to 10 H",),
    )


def empty_result() -> SolveResult:
    """No candidate survived: the report must still say so plainly."""
    problem = _ethyl_acetate_problem()
    return SolveResult(problem=problem, complete=True, candidates=(),
                       rejected_counts=(("no CH3 singlet possible", 122),))
