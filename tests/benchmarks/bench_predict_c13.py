"""Accuracy and speed of the 13C prediction against experimental shifts.

Data: ``tests/benchmarks/data/shifts_13c.csv`` (experimental 13C shifts in
CDCl3, one row per symmetry class of carbon on a mapped representative atom,
a source on every row; see DEVELOPERS.md, "Benchmark data").  Prints the
mean absolute error overall, for the benzene ring carbons and per class, the
15 worst rows with their derivation, the error without the rows marked
"less certain", and the time per molecule of the 13C step and of the whole
prediction.

Run from the repository root::

    python tests/benchmarks/bench_predict_c13.py
"""

from __future__ import annotations

import csv
import statistics
import sys
import time
from collections import defaultdict
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from rdkit import Chem  # noqa: E402

from elucidate.predict import core, predict  # noqa: E402

DATA = ROOT / "tests" / "benchmarks" / "data" / "shifts_13c.csv"
BENZENE = ("benzene-CH", "benzene-C")


def _load() -> dict[str, dict]:
    compounds: dict[str, dict] = {}
    with DATA.open(encoding="utf-8") as fh:
        for r in csv.DictReader(fh):
            c = compounds.setdefault(r["smiles"], {"name": r["compound"], "rows": []})
            c["rows"].append((int(r["map"]), float(r["shift"]), r["class"], "less certain" in r["source"]))
    return compounds


def _plain(smiles: str) -> tuple[Chem.Mol, dict[int, int]]:
    mol = Chem.MolFromSmiles(smiles)
    amap = {a.GetAtomMapNum(): a.GetIdx() for a in mol.GetAtoms() if a.GetAtomMapNum()}
    for a in mol.GetAtoms():
        a.SetAtomMapNum(0)
    return mol, amap


def main() -> None:
    compounds = _load()
    results = []  # (abs err, class, name, map, obs, pred, carbon, uncertain)
    for smiles, c in compounds.items():
        mol, amap = _plain(smiles)
        p = predict(mol)
        for m, obs, klass, unsure in c["rows"]:
            idx = amap[m]
            (carbon,) = [x for x in p.carbons if idx in x.atoms]
            results.append((abs(carbon.shift - obs), klass, c["name"], m, obs, carbon.shift, carbon, unsure))
    errs = [r[0] for r in results]
    benz = [r[0] for r in results if r[1] in BENZENE]
    sure = [r[0] for r in results if not r[7]]
    print(f"13C prediction benchmark: {len(results)} carbons in {len(compounds)} compounds")
    print(f"  MAE overall:             {statistics.mean(errs):.2f} ppm (target <= 2.5)")
    print(f"  MAE benzene ring C:      {statistics.mean(benz):.2f} ppm over {len(benz)} rows (target <= 1.5)")
    print(f"  median abs error:        {statistics.median(errs):.2f} ppm")
    print(f"  MAE without 'less certain' rows: {statistics.mean(sure):.2f} ppm over {len(sure)} rows")
    within = sum(1 for r in results if r[0] <= r[6].uncertainty)
    print(f"  within the stated uncertainty: {within}/{len(results)} ({100 * within / len(results):.0f}%)")
    print(f"  errors > 5 ppm: {sum(1 for e in errs if e > 5)}, > 10 ppm: {sum(1 for e in errs if e > 10)}")
    by_class: dict[str, list[float]] = defaultdict(list)
    for r in results:
        by_class[r[1]].append(r[0])
    print("  per class:")
    for k in sorted(by_class, key=lambda k: -len(by_class[k])):
        v = by_class[k]
        print(f"    {k:<22} MAE {statistics.mean(v):5.2f} (n={len(v):3d})  max {max(v):5.1f}")
    print("\n15 worst rows:")
    for err, klass, name, m, obs, pred, carbon, _ in sorted(results, key=lambda r: (-r[0], r[2], r[3]))[:15]:
        print(f"  {err:5.1f}  {name} map {m} [{klass}] obs {obs:.1f} pred {pred:.1f}: "
              f"{' '.join(carbon.derivation)}")

    # speed: the 13C step alone and the whole prediction, uncached
    from elucidate.predict.carbon import carbon_shifts
    from elucidate.predict.graph import build_graph

    mols = [_plain(s)[0] for s in compounds]
    smiles_list = [Chem.MolToSmiles(m) for m in mols]
    prepared = []
    for m in mols:
        g = build_graph(m)
        rk = list(Chem.CanonicalRankAtoms(m, breakTies=False))
        prepared.append((g, m, rk))
    reps = 5
    for g, m, rk in prepared:  # warm tables and templates
        carbon_shifts(g, m, rk, {}, {})
    t0 = time.perf_counter()
    for _ in range(reps):
        for g, m, rk in prepared:
            carbon_shifts(g, m, rk, {}, {})
    dt13 = (time.perf_counter() - t0) / (reps * len(prepared))
    t0 = time.perf_counter()
    for _ in range(reps):
        core._cached.cache_clear()
        for s in smiles_list:
            predict(s)
    dt = (time.perf_counter() - t0) / (reps * len(smiles_list))
    heavy = statistics.mean(m.GetNumAtoms() for m in mols)
    print(f"\nSpeed: 13C step {dt13 * 1000:.3f} ms per molecule; whole prediction (1H + 13C, SMILES "
          f"parse included, uncached) {dt * 1000:.2f} ms per molecule ({len(mols)} molecules, "
          f"mean {heavy:.1f} heavy atoms, {reps} rounds)")


if __name__ == "__main__":
    main()
