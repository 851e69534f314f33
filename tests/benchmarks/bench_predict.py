"""Accuracy and speed of the 1H prediction against experimental shifts.

Data: ``tests/benchmarks/data/shifts_1h.csv`` (experimental 1H shifts, one
row per H environment on a mapped representative atom, a source on every
row; see docs/data.md).  Prints the mean absolute error overall and per
class, the error without the compounds whose shifts defined α increments
in ``elucidate/predict/data/sp3_h.csv`` (column ``defined_by``), the ten
worst protons with their derivation, and the time per molecule.

Run from the repository root::

    python tests/benchmarks/bench_predict.py
"""

from __future__ import annotations

import csv
import re
import statistics
import sys
import time
import tomllib
from collections import defaultdict
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from rdkit import Chem  # noqa: E402

from elucidate.predict import predict  # noqa: E402
from elucidate.predict import core, tables  # noqa: E402

DATA = ROOT / "tests" / "benchmarks" / "data" / "shifts_1h.csv"
UNKNOWNS = ROOT / "tests" / "benchmarks" / "data" / "unknowns.toml"


def _canon(smiles: str) -> str:
    mol = Chem.MolFromSmiles(smiles)
    return Chem.MolToSmiles(mol) if mol is not None else smiles


def _defining() -> set[str]:
    out: set[str] = set()
    for row in tables.sp3_h().values():
        for s in row.text.get("defined_by", "").split(";"):
            if s:
                out.add(_canon(s))
    return out


def _load() -> dict[str, dict]:
    compounds: dict[str, dict] = {}
    with DATA.open(encoding="utf-8") as fh:
        for r in csv.DictReader(fh):
            key = r["smiles"]
            c = compounds.setdefault(key, {"name": r["compound"], "rows": defaultdict(list)})
            c["rows"][int(r["map"])].append((float(r["shift"]), r["class"], r["source"]))
    return compounds


def main() -> None:
    compounds = _load()
    defining = _defining()
    results = []  # (abs err, class, name, map, obs, pred, env, defining?)
    for smiles, c in compounds.items():
        mol = Chem.MolFromSmiles(smiles)
        amap = {a.GetAtomMapNum(): a.GetIdx() for a in mol.GetAtoms() if a.GetAtomMapNum()}
        for a in mol.GetAtoms():
            a.SetAtomMapNum(0)
        plain = Chem.MolToSmiles(mol)
        p = predict(mol)
        is_def = _canon(plain) in defining
        for m, rows in c["rows"].items():
            idx = amap[m]
            envs = sorted((e for e in p.environments if idx in e.atoms), key=lambda e: e.shift)
            obs = sorted(rows)
            if not envs:
                print(f"!! no environment for {c['name']} map {m}")
                continue
            if len(obs) == len(envs):
                pairs = list(zip(obs, envs))
            elif len(obs) == 1:
                mean = sum(e.shift * e.h_count for e in envs) / sum(e.h_count for e in envs)
                pairs = [(obs[0], envs[0] if len(envs) == 1 else None)]
                if len(envs) > 1:
                    results.append((abs(mean - obs[0][0]), obs[0][1], c["name"], m, obs[0][0], mean,
                                    envs[0], is_def))
                    continue
            else:
                pairs = [(o, envs[0]) for o in obs]
            for (shift, klass, _src), env in pairs:
                results.append((abs(env.shift - shift), klass, c["name"], m, shift, env.shift, env, is_def))

    scored = [r for r in results if r[1] != "exchangeable"]
    n_comp = len({r[2] for r in scored})
    print(f"1H prediction benchmark: {len(scored)} protons/environments in {n_comp} compounds "
          f"(+{len(results) - len(scored)} exchangeable rows reported separately)")
    print(f"  MAE overall (non-exchangeable): {statistics.mean(r[0] for r in scored):.3f} ppm")
    print(f"  median abs error:               {statistics.median(r[0] for r in scored):.3f} ppm")
    held = [r for r in scored if not r[7]]
    print(f"  MAE without the {len({r[2] for r in scored if r[7]})} compounds that defined α increments: "
          f"{statistics.mean(r[0] for r in held):.3f} ppm over {len(held)} rows")
    by_class: dict[str, list[float]] = defaultdict(list)
    by_class_held: dict[str, list[float]] = defaultdict(list)
    for r in results:
        by_class[r[1]].append(r[0])
        if not r[7]:
            by_class_held[r[1]].append(r[0])
    print("  per class (all rows | without defining compounds):")
    for k in sorted(by_class):
        v = by_class[k]
        h = by_class_held.get(k, [])
        hs = f"{statistics.mean(h):.3f} (n={len(h)})" if h else "-"
        print(f"    {k:<16} MAE {statistics.mean(v):.3f} (n={len(v)}) | {hs}   max {max(v):.2f}")
    within = sum(1 for r in scored if r[0] <= r[6].uncertainty)
    print(f"  within the stated uncertainty: {within}/{len(scored)} ({100 * within / len(scored):.0f}%)")
    print("\nTen worst (non-exchangeable):")
    for r in sorted(scored, key=lambda r: -r[0])[:10]:
        err, klass, name, m, obs, pred, env, _ = r
        print(f"  {err:.2f}  {name} map {m} [{klass}] obs {obs:.2f} pred {pred:.2f}: "
              f"{' '.join(env.derivation)}")

    # speed: uncached predictions of every compound, 1H + 13C
    smiles_list = []
    for smiles in compounds:
        mol = Chem.MolFromSmiles(smiles)
        for a in mol.GetAtoms():
            a.SetAtomMapNum(0)
        smiles_list.append(Chem.MolToSmiles(mol))
    for s in smiles_list:  # warm tables and templates
        predict(s)
    reps = 5
    t0 = time.perf_counter()
    for _ in range(reps):
        core._cached.cache_clear()
        for s in smiles_list:
            predict(s)
    dt = (time.perf_counter() - t0) / (reps * len(smiles_list))
    heavy = statistics.mean(Chem.MolFromSmiles(s).GetNumAtoms() for s in smiles_list)
    print(f"\nSpeed: {dt * 1000:.2f} ms per molecule (uncached, 1H + 13C, SMILES parse included; "
          f"{len(smiles_list)} molecules, mean {heavy:.1f} heavy atoms, {reps} rounds)")
    larger = ["CC(C)Cc1ccc(C(C)C(=O)O)cc1", "CCOC(=O)c1ccc(N)cc1", "CN1CCC(CC1)C(=O)c1ccccc1",
              "O=C(O)c1ccccc1OC(C)=O", "CC(=O)Nc1ccc(O)cc1", "CCCCCCCCCC(=O)OC", "C=CCc1ccc(O)c(OC)c1",
              "CC12CCC(CC1)C(C)(C)O2", "c1ccc2c(c1)ccc1ccccc12", "CC(C)C1CCC(C)CC1O"]
    t0 = time.perf_counter()
    for _ in range(reps * 4):
        core._cached.cache_clear()
        for s in larger:
            predict(s)
    dt = (time.perf_counter() - t0) / (reps * 4 * len(larger))
    heavy = statistics.mean(Chem.MolFromSmiles(s).GetNumAtoms() for s in larger)
    print(f"Speed, larger molecules: {dt * 1000:.2f} ms per molecule ({len(larger)} molecules, "
          f"mean {heavy:.1f} heavy atoms)")
    for s in smiles_list:
        predict(s)
    t0 = time.perf_counter()
    for _ in range(reps):
        for s in smiles_list:
            predict(s)
    dt = (time.perf_counter() - t0) / (reps * len(smiles_list))
    print(f"Speed, repeated SMILES (cached): {dt * 1e6:.1f} µs per molecule")


_PEAK = re.compile(r"(\d+\.\d+)(?:\s*[-–]\s*\d+\.\d+)?\s*\(([^)]*)\)")
_MULT = re.compile(r"^\s*(br\s*s|brs|bs|s|d|t|q|quint|p|sext|sept|hept|m|[dtq]{2,4})\b")
_NH = re.compile(r"(\d+)\s*H\b")


def _observed_peaks(h1: str) -> list[tuple[float, str, int]]:
    out = []
    for m in _PEAK.finditer(h1):
        inner = m.group(2)
        mm = _MULT.match(inner)
        nh = _NH.search(inner)
        if not mm or not nh:
            continue
        mult = mm.group(1).replace(" ", "")
        if mult in ("brs", "bs"):
            continue  # broad singlets: exchangeable H, not scored here
        mult = {"p": "quint", "hept": "sept"}.get(mult, mult)
        out.append((float(m.group(1)), mult, int(nh.group(1))))
    return out


def unknowns() -> None:
    """13C (sorted-order matching) and multiplicity agreement on the solver's
    benchmark unknowns (tests/benchmarks/data/unknowns.toml)."""
    if not UNKNOWNS.exists():
        return
    cases = tomllib.loads(UNKNOWNS.read_text(encoding="utf-8"))["case"]
    c13_err: list[float] = []
    n_c13 = 0
    mult_ok = mult_all = 0
    misses: list[str] = []
    for case in cases:
        p = predict(case["smiles"])
        if case.get("c13"):
            obs = sorted((float(x.split("(")[0]) for x in case["c13"].split(",")), reverse=True)
            pred = sorted((c.shift for c in p.carbons), reverse=True)
            if len(obs) == len(pred):
                n_c13 += 1
                c13_err += [abs(a - b) for a, b in zip(obs, pred)]
        peaks = _observed_peaks(case["h1"])
        pool = [(e.h_count, e.multiplicity, e.shift) for e in p.environments if not e.exchangeable]
        for shift, mult, nh in peaks:
            mult_all += 1
            near = sorted(pool, key=lambda x: abs(x[2] - shift))
            if near and any(x[1] == mult for x in near[:1]):
                mult_ok += 1
            elif len(misses) < 40:
                misses.append(f"{case['name']}: obs {shift:.2f} {mult} ({nh}H); nearest predicted "
                              f"{near[0][2]:.2f} {near[0][1]} ({near[0][0]}H)" if near else case["name"])
    print(f"\nUnknowns file: {len(cases)} cases")
    if c13_err:
        print(f"  13C MAE {statistics.mean(c13_err):.2f} ppm over {len(c13_err)} carbons in {n_c13} compounds "
              f"(observed and predicted lists matched in sorted order; max {max(c13_err):.1f})")
    if mult_all:
        print(f"  1H multiplicity of the nearest predicted environment equals the reported one: "
              f"{mult_ok}/{mult_all} peaks ({100 * mult_ok / mult_all:.0f}%)")
        for line in misses:
            print(f"    {line}")


if __name__ == "__main__":
    main()
    unknowns()
