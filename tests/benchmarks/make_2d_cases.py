"""Write ``data/unknowns_2d.toml``: 2D cross peaks for literature unknowns.

Run from the repository root (once; the output is committed)::

    python tests/benchmarks/make_2d_cases.py

The 1D data (1H, 13C with DEPT labels) are the literature spectra of
``data/unknowns_large.toml`` (recalled from memory, each case names its
source there).  No measured 2D peak lists were available to us, so the
cross peaks are the ones each known structure gives in the standard
experiments (common practice: HSQC one bond; COSY between H on bonded atoms,
3J, and between the two H of a CH2 seen apart; HMBC 2J and 3J H-C, at most
:data:`HMBC_PER_SIGNAL` per 1H signal, carbons without H first, as a chemist
lists the informative ones).  Which 1H signal and 13C line stand for which
atom is the assignment elucidate's own scorer makes for the true structure
(1D data only); it is written into the file beside each case, so a reader can
check it.  Exchangeable H (OH, NH) get no cross peaks, nor does a 13C line
the assignment gives two kinds of carbon (an overlap) or two 1H signals
unless it is a CH2.
"""

from __future__ import annotations

import sys
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

HMBC_PER_SIGNAL = 4
OUT = ROOT / "tests/benchmarks/data/unknowns_2d.toml"

#: cases of unknowns_large.toml taken (C10-C17; 1D alone leaves many structures)
NAMES = (
    "ibuprofen", "4'-isobutylacetophenone", "naproxen", "lidocaine", "prilocaine", "phenacetin",
    "procaine", "N,N-diethyl-3-methylbenzamide (DEET)", "nicotine", "eugenol", "(E)-isoeugenol",
    "4-(4-hydroxyphenyl)butan-2-one (raspberry ketone)", "safrole", "(E)-anethole", "estragole",
    "vanillin acetate", "(E)-cinnamyl acetate", "ethyl (E)-cinnamate", "beta-ionone", "benzyl benzoate",
    "isopentyl salicylate", "2-methoxynaphthalene (nerolin)", "7-methoxycoumarin (herniarin)", "linalool",
    "geraniol", "citronellal", "thymol", "carvacrol", "2-benzylpyridine", "2-acetylbenzofuran",
    "gemfibrozil", "nabumetone", "tetracaine",
)


def _cross_peaks(case: dict) -> tuple[str, str, str, str] | None:
    from rdkit import Chem

    from elucidate.parse import load_problem
    from elucidate.predict import predict
    from elucidate.score.assign import assign

    problem = load_problem(formula=case["formula"], h1=case["h1"], c13=case["c13"], solvent=case["solvent"])
    mol = Chem.MolFromSmiles(case["smiles"])
    pred = predict(case["smiles"], solvent=problem.solvent, field_mhz=problem.field_mhz)
    fit = assign(problem, pred, time_limit_s=10.0)
    if not fit.feasible:
        print(f"skipped {case['name']}: the scorer finds no assignment of the true structure to its 1D data")
        return None
    envs = {e.index: e for e in pred.environments}
    sig_atoms: dict[int, set[int]] = {}
    for a in fit.assignments:
        env = envs[a.environment]
        if a.signal is None or env.exchangeable:
            continue
        sig_atoms.setdefault(a.signal, set()).update(env.atoms)
    line_of: dict[int, int] = {}
    rows_per_line: dict[int, int] = {}
    for row in fit.c13_assignments:
        if row.line is not None and row.atoms:
            rows_per_line[row.line] = rows_per_line.get(row.line, 0) + 1
            for atom in row.atoms:
                line_of[atom] = row.line
    # a line the assignment gives two kinds of carbon (an overlap) is ambiguous: no cross peaks to it
    line_of = {a: line for a, line in line_of.items() if rows_per_line[line] == 1}
    # a line bound to two 1H signals must be a CH2 seen as two H (else the assignment split an
    # environment of equivalent groups over two lines' worth of signals): no cross peaks to it
    signals_of_line: dict[int, set[int]] = {}
    for s, atoms in sig_atoms.items():
        for a in atoms:
            if a in line_of:
                signals_of_line.setdefault(line_of[a], set()).add(s)
    odd = {line for line, sigs in signals_of_line.items() if len(sigs) > 1 and any(
        mol.GetAtomWithIdx(a).GetTotalNumHs() != 2 for a, ln in line_of.items() if ln == line)}
    line_of = {a: line for a, line in line_of.items() if line not in odd}
    dist = Chem.GetDistanceMatrix(mol)
    h1 = problem.h1
    c13 = problem.c13
    hsqc, cosy, hmbc = [], [], []
    for s in sorted(sig_atoms):
        for line in sorted({line_of[a] for a in sig_atoms[s] if a in line_of}):
            hsqc.append(f"{h1[s].shift:.2f}/{c13[line].shift:.1f}")
    sigs = sorted(sig_atoms)
    for i, s in enumerate(sigs):
        for t in sigs[i + 1:]:
            if any(dist[a][b] == 1 or (a == b and mol.GetAtomWithIdx(a).GetTotalNumHs() == 2)
                   for a in sig_atoms[s] for b in sig_atoms[t]):
                cosy.append(f"{h1[s].shift:.2f}/{h1[t].shift:.2f}")
    for s in sigs:
        near: dict[int, tuple] = {}
        for c, line in line_of.items():
            d = min(dist[a][c] for a in sig_atoms[s])
            if d in (1, 2):
                bare = mol.GetAtomWithIdx(c).GetTotalNumHs() == 0
                key = (not bare, d, line)
                near[line] = min(near.get(line, key), key)
        for _, _, line in sorted(near.values())[:HMBC_PER_SIGNAL]:
            hmbc.append(f"{h1[s].shift:.2f}/{c13[line].shift:.1f}")
    words = []
    for s in sigs:
        words.append(f"{h1[s].shift:.2f}: atoms {','.join(str(a) for a in sorted(sig_atoms[s]))}")
    return ", ".join(hsqc), ", ".join(cosy), ", ".join(hmbc), "; ".join(words)


def _q(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"') + '"'


def main() -> int:
    large = tomllib.loads((ROOT / "tests/benchmarks/data/unknowns_large.toml").read_text())["case"]
    by_name = {c["name"]: c for c in large}
    out = [
        "# 2D benchmark unknowns (C10-C17): literature 1D spectra + the cross peaks each",
        "# true structure gives.  Written by tests/benchmarks/make_2d_cases.py (see its",
        "# docstring); do not edit by hand, re-run the script.",
        "#",
        "# 1D data: copied from unknowns_large.toml (recalled literature spectra, from",
        "# memory; `source` names each).  Cross peaks: NOT measured and not recalled --",
        "# implied by the true structure in the standard experiments (common practice),",
        "# under the 1D assignment in `assignment` (heavy-atom indices of `smiles`).",
        "",
    ]
    written = 0
    for name in NAMES:
        case = by_name[name]
        got = _cross_peaks(case)
        if got is None:
            continue
        hsqc, cosy, hmbc, words = got
        written += 1
        out += [
            "[[case]]",
            f"name = {_q(name)}",
            f"formula = {_q(case['formula'])}",
            f"smiles = {_q(case['smiles'])}",
            f"solvent = {_q(case['solvent'])}",
            f"h1 = {_q(case['h1'])}",
            f"c13 = {_q(case['c13'])}",
            f"hsqc = {_q(hsqc)}",
            f"cosy = {_q(cosy)}",
            f"hmbc = {_q(hmbc)}",
            f"assignment = {_q(words)}",
            f"source = {_q('1D: ' + case['source'] + '; 2D: implied by the structure (common practice), not measured')}",
            "",
        ]
    OUT.write_text("\n".join(out))
    print(f"wrote {OUT.relative_to(ROOT)}: {written} cases")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
