"""Speed of the structure generator (prints figures; not collected by pytest).

Run from the repository root::

    python tests/benchmarks/bench_generate.py            # everything (a few minutes)
    python tests/benchmarks/bench_generate.py --quick    # skip the SMILES runs of the two largest

The machine is shared and noisy, so every figure is also printed as a ratio
against references measured in the same run, which slow down with it:

* ``ref`` -- the tests' brute-force enumerator (tests/_reference_isomers.py)
  on C6H6, best of three; ``count/ref`` is a count's time in those units;
* ``full`` -- skeleton enumeration by canonical augmentation on all
  vertices (``reference_skeletons``, the path used before leaf stripping) on
  the same parameters; ``full/leaf`` is how many times faster the
  leaf-stripped path makes the same skeletons;
* ``W`` -- RDKit's own cost of writing canonical SMILES of ready molecules
  (MolToSmiles, best of three over the same molecules); ``write/W`` is the
  generator's own SMILES writing (structure_smiles on finished structures,
  best of three) in those units, and ``(smiles-count)/W`` the extra cost of a
  SMILES run over a count, per structure.

Times are wall time (time.perf_counter); small runs are best of three.
Also printed: a solver-style constrained run; the reference enumerator on
C7H8 against the generator; partial structures visited with and without
constraints (pruning).
"""

from __future__ import annotations

import argparse
import re
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

from rdkit import Chem  # noqa: E402

from elucidate.generate import AtomSpec, FragmentSpec, Spec, Stats, count, generate  # noqa: E402
from elucidate.generate import isomers as _isomers  # noqa: E402
from elucidate.generate import skeletons as _skeletons  # noqa: E402
from elucidate.generate.decorate import structure_smiles  # noqa: E402
from elucidate.model import Formula  # noqa: E402


def F(text: str) -> Formula:
    counts = {el: int(n) if n else 1 for el, n in re.findall(r"([A-Z][a-z]?)(\d*)", text)}
    order = ["C", "H"] + sorted(el for el in counts if el not in ("C", "H"))
    return Formula(tuple((el, counts[el]) for el in order if el in counts))


def cold() -> None:
    """Forget cached skeletons and cores so each run pays for its own."""
    _isomers._skeleton_list.cache_clear()
    _skeletons.cores_cache_clear()


def best(fn, reps: int):  # type: ignore[no-untyped-def]
    """(result, best wall time) of ``reps`` calls."""
    out, tb = None, float("inf")
    for _ in range(reps):
        t = time.perf_counter()
        out = fn()
        tb = min(tb, time.perf_counter() - t)
    return out, tb


def timed_count(spec: Spec, reps: int = 1) -> tuple[int, float, Stats]:
    def run() -> tuple[int, Stats]:
        cold()
        st = Stats()
        return count(spec, stats=st), st

    (n, st), t = best(run, reps)
    return n, t, st


def timed_smiles(spec: Spec, reps: int = 1) -> tuple[list[str], float]:
    def run() -> list[str]:
        cold()
        return list(generate(spec))

    return best(run, reps)


def rdkit_write_cost(smiles: list[str], sample: int = 20000) -> float:
    """Seconds per molecule RDKit needs to write canonical SMILES of ready molecules."""
    step = max(1, len(smiles) // sample)
    mols = [Chem.MolFromSmiles(s) for s in smiles[::step]]
    _, t = best(lambda: [Chem.MolToSmiles(m) for m in mols], 3)
    return t / len(mols)


def own_write_cost(spec: Spec, sample: int = 20000) -> float:
    """Seconds per structure the generator spends writing SMILES of finished
    structures (the same sample of structures, templates already built)."""
    sts = list(_isomers._structures(spec, None, Stats(), None))
    step = max(1, len(sts) // sample)
    sts = sts[::step]
    for st in sts:
        st.skeleton and st.skeleton.smiles_writer  # build templates outside the timing
    _, t = best(lambda: [structure_smiles(st) for st in sts], 3)
    return t / len(sts)


def reference_time() -> float:
    """Best of three runs of the tests' brute-force enumerator on C6H6."""
    from _reference_isomers import _reference_isomers  # the uncached enumerator

    f = F("C6H6").as_dict()
    _, t = best(lambda: _reference_isomers(f), 3)
    return t


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="skip SMILES output for C9H12O and C10H8")
    args = ap.parse_args()
    Chem.MolFromSmiles("C")  # import and warm RDKit outside the timings

    ref0 = reference_time()
    print(f"references: ref = brute-force enumerator on C6H6 {ref0:.3f} s")
    print("formula    structures   count_s count/ref   struct/s | smiles_s  us/struct  W_us  write/W"
          "  (smiles-count)/W")
    for f in ["C10H22", "C7H8", "C8H10", "C7H6O", "C9H12O", "C10H8"]:
        spec = Spec(F(f))
        big = f in ("C9H12O", "C10H8")
        n, tc, _ = timed_count(spec, 1 if big else 3)
        line = f"{f:9s} {n:11d} {tc:9.3f} {tc / ref0:9.2f} {n / tc:10.0f} |"
        if args.quick and big:
            print(line + " (skipped with --quick)")
            continue
        out, ts = timed_smiles(spec, 1 if big else 3)
        assert len(out) == n
        w = rdkit_write_cost(out)
        own = own_write_cost(spec)
        extra = (ts - tc) / n
        print(line + f" {ts:8.3f} {ts / n * 1e6:10.1f} {w * 1e6:5.1f} {own / w:8.2f} {extra / w:10.2f}")
        sys.stdout.flush()
    ref1 = reference_time()
    print(f"references again at the end: ref {ref1:.3f} s (start/end {ref0 / ref1:.2f}: how much the machine's speed moved)")

    print()
    print("skeletons with leaf-only atoms (caps 1 = CH3/OH/halogen): leaf-stripped vs full augmentation")
    print("  n  edges caps                           skeletons   leaf_s   full_s  full/leaf")
    for caps, me in [
        ((4, 4, 3, 3, 3, 3, 2, 2, 2, 1, 1), 14),  # C10H12O2-like fixed H, 2 leaves, 11 units
        ((4, 4, 4, 3, 3, 3, 2, 2, 1, 1, 1), 12),  # 3 leaves (a methoxy, a methyl, an OH)
        ((4, 4, 4, 3, 3, 2, 2, 1, 1, 1, 1, 1), 13),  # 5 leaves (isopropyl, tert-butyl-like)
    ]:
        nv, nl = len(caps), caps.count(1)

        def leaf() -> int:
            _skeletons.cores_cache_clear()
            return sum(1 for _ in _skeletons.iter_skeletons(nv, me, caps, min_edges=nv - 1, min_leaves=nl))

        def full() -> int:
            return sum(1 for _ in _skeletons.reference_skeletons(nv, me, caps, min_edges=nv - 1, min_leaves=nl))

        k1, t1 = best(leaf, 1)
        k2, t2 = best(full, 1)
        assert k1 == k2
        print(f"  {nv:2d} {me:5d}  {str(caps):32s} {k1:9d} {t1:8.2f} {t2:8.2f} {t2 / t1:9.2f}")
        sys.stdout.flush()

    print()
    print("solver-style: C9H10O2, monosubstituted benzene ring, H fixed per atom (CH2, CH3, C, O, O)")
    atoms = (AtomSpec("C", 2), AtomSpec("C", 3), AtomSpec("C", 0), AtomSpec("O", 0), AtomSpec("O", 0))
    spec = Spec(F("C9H10O2"), atoms=atoms, fragments=(FragmentSpec("*c1ccccc1"),))
    out, ts = timed_smiles(spec)
    st = Stats()
    cold()
    t = time.perf_counter()
    n = count(spec, stats=st)
    tc = time.perf_counter() - t
    print(f"  {n} structures; count {tc:.4f} s ({tc / ref0:.3f} ref), with SMILES {ts:.4f} s; visited {st.visited}")
    spec2 = Spec(
        F("C9H10O2"),
        atoms=(
            AtomSpec("C", 2, frozenset({3})),  # a CH2 quartet next to CH3
            AtomSpec("C", 3, frozenset({2})),  # a CH3 triplet
            AtomSpec("C", 0), AtomSpec("O", 0), AtomSpec("O", 0),
        ),
        fragments=(FragmentSpec("*c1ccccc1"),),
    )
    st2 = Stats()
    cold()
    t = time.perf_counter()
    out2 = list(generate(spec2, stats=st2))
    print(f"  + n+1 rules (CH2 q, CH3 t): {len(out2)} structures in {time.perf_counter() - t:.4f} s, "
          f"visited {st2.visited}: {', '.join(out2)}")

    print()
    print("pruning (partial structures visited):")
    for label, a, b in [
        ("C9H10O2 fixed H (5 CH, 2 C, CH2, CH3, 2 O) vs phenyl fragment + the rest", Spec(F("C9H10O2"), atoms=(
            *[AtomSpec("C", 1)] * 5, AtomSpec("C", 0), *atoms)), spec),
        ("C7H14O2 plain vs fixed H + n+1 sets", Spec(F("C7H14O2")), Spec(F("C7H14O2"), atoms=(
            AtomSpec("C", 2, frozenset({1})), AtomSpec("C", 2, frozenset({3})), AtomSpec("C", 1),
            AtomSpec("C", 3, frozenset({2})), AtomSpec("C", 3, frozenset({1})),
            AtomSpec("C", 3, frozenset({1})), AtomSpec("C", 0), AtomSpec("O", 0), AtomSpec("O", 0)))),
        ("C7H14O2 fixed H without vs with n+1 sets", Spec(F("C7H14O2"), atoms=(
            AtomSpec("C", 2), AtomSpec("C", 2), AtomSpec("C", 1), AtomSpec("C", 3), AtomSpec("C", 3),
            AtomSpec("C", 3), AtomSpec("C", 0), AtomSpec("O", 0), AtomSpec("O", 0))), Spec(F("C7H14O2"), atoms=(
            AtomSpec("C", 2, frozenset({1})), AtomSpec("C", 2, frozenset({3})), AtomSpec("C", 1),
            AtomSpec("C", 3, frozenset({2})), AtomSpec("C", 3, frozenset({1})),
            AtomSpec("C", 3, frozenset({1})), AtomSpec("C", 0), AtomSpec("O", 0), AtomSpec("O", 0)))),
    ]:
        na, ta, sa = timed_count(a)
        nb, tb, sb = timed_count(b)
        print(f"  {label}: {na} structures, visited {sa.visited}, colourings {sa.colourings}, {ta:.3f} s"
              f"  ->  {nb} structures, visited {sb.visited}, colourings {sb.colourings}, {tb:.4f} s")

    print()
    from _reference_isomers import _reference_isomers

    t = time.perf_counter()
    ref = _reference_isomers(F("C7H8").as_dict())
    tr = time.perf_counter() - t
    out, ts = timed_smiles(Spec(F("C7H8")))
    same = set(out) == ref
    print(f"reference enumerator C7H8: {len(ref)} structures in {tr:.3f} s; generator (SMILES) {ts:.3f} s; "
          f"ratio {tr / ts:.1f}x; same set: {same}")


if __name__ == "__main__":
    main()
