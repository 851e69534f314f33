"""2D correlations: reading HSQC/COSY/HMBC cross peaks and using them as hard constraints.

1D data are literature spectra in CDCl3 recalled from memory (the same values
as tests/benchmarks/data/unknowns.toml, which names each source).  The cross
peaks are the ones each compound's known structure gives in the standard
experiments (common practice: HSQC one bond, COSY vicinal 3J H-H, HMBC 2J and
3J H-C); which of them are listed is said beside each case.
"""

from __future__ import annotations

import doctest
import re
import json
from itertools import combinations
from pathlib import Path

import pytest
from typer.testing import CliRunner

from elucidate.cli import app
from elucidate.constrain import correlations as corr_mod
from elucidate.constrain.correlations import correlation_evidence, signal_totals
from elucidate.constrain.evidence import Graph, read_evidence
from elucidate.errors import InputError
from elucidate.model import C13Signal, CrossPeak, H1Signal, Problem
from elucidate.parse import correlations as parse_mod
from elucidate.parse import load_problem, parse_formula

# --- literature 1D data (CDCl3) -------------------------------------------------

# ethyl acetate: Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512 (recalled from memory)
ETOAC = dict(
    formula="C4H8O2",
    h1="4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)",
    c13="171.4, 60.5, 21.0, 14.2",
)
# methyl propanoate: from memory (literature spectrum, CDCl3); 13C from memory
MEPROP = dict(
    formula="C4H8O2",
    h1="3.67 (s, 3H), 2.32 (q, J = 7.6 Hz, 2H), 1.14 (t, J = 7.6 Hz, 3H)",
    c13="174.9, 51.6, 27.5, 9.2",
)
# propyl acetate: from memory (literature spectrum, CDCl3); 13C from memory
PRACE = dict(
    formula="C5H10O2",
    h1="4.02 (t, J = 6.7 Hz, 2H), 2.05 (s, 3H), 1.64 (sext, J = 7.1 Hz, 2H), 0.94 (t, J = 7.4 Hz, 3H)",
    c13="171.2, 66.1, 22.0, 21.0, 10.4",
)
# ethyl vinyl ether: from memory (literature spectrum, CDCl3); the =CH2 H at 4.17 and 3.97 sit on one carbon
EVE = dict(
    formula="C4H8O",
    h1="6.47 (dd, J = 14.3, 6.8 Hz, 1H), 4.17 (dd, J = 14.3, 1.9 Hz, 1H), 3.97 (dd, J = 6.8, 1.9 Hz, 1H), "
    "3.73 (q, J = 7.0 Hz, 2H), 1.29 (t, J = 7.0 Hz, 3H)",
    c13="151.8, 86.3, 63.4, 14.5",
)


def strict_of(problem: Problem):
    return next(e for e in read_evidence(problem) if e.key == "2d")


def long_of(problem: Problem):
    return next(e for e in read_evidence(problem) if e.key in ("2d-long-range", "2d-hsqc-cosy"))


# --- parsing ----------------------------------------------------------------------


def test_text_forms_and_matching() -> None:
    p = load_problem(**ETOAC, hsqc="4.12/60.5; 2.05/21.0\n1.26 / 14.2", cosy="4.12/1.26 (s)", hmbc="2.05/171.4 (weak)")
    kinds = [(c.kind, c.signal1, c.signal2) for c in p.correlations]
    assert kinds == [("HSQC", 0, 1), ("HSQC", 1, 2), ("HSQC", 2, 3), ("COSY", 0, 2), ("HMBC", 1, 0)]
    assert p.correlations[3].intensity == "strong" and p.correlations[4].intensity == "weak"
    assert not p.warnings


def test_tolerances() -> None:
    # 0.03 ppm around a 1H signal, 0.5 ppm around a 13C line (documented in parse/correlations.py)
    assert parse_mod.H1_MATCH_PPM == 0.03 and parse_mod.C13_MATCH_PPM == 0.5
    p = load_problem(**ETOAC, hsqc="4.15/60.9, 4.16/60.5, 4.12/61.1")
    first, second, third = p.correlations
    assert (first.signal1, first.signal2) == (0, 1)
    assert second.signal1 is None and third.signal2 is None
    assert sum("matches no" in w for w in p.warnings) == 2


def test_range_signal_and_ambiguous_match() -> None:
    # a multiplet range matches anywhere inside it; two 13C lines within 0.5 ppm: not used, a warning
    p = load_problem(formula="C7H8O", h1="7.38-7.27 (m, 5H), 4.67 (s, 2H), 1.90 (br s, 1H)",
                     c13="140.9, 128.6, 128.3, 127.6, 65.3", hsqc="7.30/128.4, 4.67/65.3")
    amb, ok = p.correlations
    assert amb.signal1 == 0 and amb.signal2 is None and ok.matched
    assert any("matches 2 13C lines (128.6, 128.3)" in w for w in p.warnings)


def test_diagonal_and_duplicates() -> None:
    p = load_problem(**ETOAC, cosy="4.12/4.13, 4.12/1.26, 1.26/4.12")
    assert [c.matched for c in p.correlations] == [False, True]
    assert any("diagonal" in w for w in p.warnings)


def test_no_13c_list_takes_the_lines_from_the_cross_peaks() -> None:
    # ethyl acetate (Gottlieb et al. 1997 values, recalled) with no 13C list: the δC of the
    # cross peaks become the lines; HMBC 171.2 and 171.4 (one carbon read twice) are one line
    p = load_problem(formula="C4H8O2", h1=ETOAC["h1"], hsqc="4.12/60.5, 2.05/21.0",
                     hmbc="2.05/171.4, 4.12/171.2")
    assert [c.shift for c in p.c13] == [171.3, 60.5, 21.0]
    assert all(c.matched for c in p.correlations)
    assert p.correlations[2].signal2 == p.correlations[3].signal2 == 0
    assert any("no 13C list given: 3 13C line(s) taken from" in w for w in p.warnings)


def test_no_13c_list_lines_close_together_are_not_one_carbon() -> None:
    # ethylbenzene (from memory, literature spectrum, CDCl3): meta CH 128.4 and ortho CH 127.9
    # are within the matching tolerance, so without a 13C list they make one line; its HSQC
    # peaks to two 1H signals must not be read as one CH2 carbon (the truth has no such CH2)
    p = load_problem(formula="C8H10", h1="7.31-7.27 (m, 2H), 7.22-7.16 (m, 3H), 2.65 (q, J = 7.6 Hz, 2H), "
                     "1.24 (t, J = 7.6 Hz, 3H)",
                     hsqc="7.29/128.4, 7.19/127.9, 7.19/125.6, 2.65/28.9, 1.24/15.6", hmbc="1.24/144.2")
    assert [c.shift for c in p.c13] == [144.2, 128.2, 125.6, 28.9, 15.6]
    strict = correlation_evidence(p)[0]
    assert strict.reason(Graph.from_smiles("CCc1ccccc1")) is None
    assert 2 not in (strict.group_bounds() or {})


def test_solve_without_13c_list_uses_the_cross_peaks() -> None:
    # methyl propanoate, 1D from memory; cross peaks implied by the structure (common practice):
    # with no 13C list the 2D peaks alone still single out the truth
    from elucidate.solve import solve

    result = solve(load_problem(formula=MEPROP["formula"], h1=MEPROP["h1"],
                                hsqc="3.67/51.6, 2.32/27.5, 1.14/9.2", hmbc="3.67/174.9, 1.14/174.9",
                                cosy="2.32/1.14"), time_limit_s=60)
    assert [c.smiles for c in result.candidates] == ["CCC(=O)OC"]


def test_case_file_inline_and_csv(tmp_path: Path) -> None:
    (tmp_path / "hmbc.csv").write_text("dH (ppm),δC,intensity,note\n3.67,174.9,w,OCH3 to C=O\n1.14,174.9,,\n")
    (tmp_path / "case.toml").write_text(
        f'formula = "{MEPROP["formula"]}"\nh1 = "{MEPROP["h1"]}"\nc13 = "{MEPROP["c13"]}"\n'
        'hsqc = [{dH = 3.67, dC = 51.6}, "2.32/27.5", [1.14, 9.2]]\n'
        'cosy = [{H1 = 2.32, H2 = 1.14}]\n'
        'hmbc = "@hmbc.csv"\n'
        'noesy = "3.67/2.32"\n'
    )
    p = load_problem(tmp_path / "case.toml")
    assert [c.kind for c in p.correlations] == ["HSQC"] * 3 + ["COSY", "HMBC", "HMBC", "NOESY"]
    assert all(c.matched for c in p.correlations)
    hmbc = p.correlations[4]
    assert (hmbc.intensity, hmbc.note) == ("weak", "OCH3 to C=O")
    # NOESY is read but is no constraint
    assert all(p.kind != "NOESY" for e in correlation_evidence(p) for p in e.peaks)
    assert p.to_json()["correlations"][0]["kind"] == "HSQC"


@pytest.mark.parametrize(
    "kwargs, message",
    [
        (dict(hsqc="4.12-60.5"), r"--hsqc item 1 \(position 1\): '4.12-60.5' is not a cross peak"),
        (dict(hsqc="4.12/60.5, x/2"), r"item 2 .*is not a cross peak"),
        (dict(cosy="4.12/60.5"), r"1H shift 60.5 is outside"),
        (dict(hmbc="4.12/400"), r"13C shift 400 is outside"),
        (dict(hsqc=" , "), r"no cross peaks"),
        (dict(hsqc="@missing.csv"), r"HSQC file '.*missing.csv' not found"),
    ],
)
def test_bad_input_one_line(kwargs: dict, message: str) -> None:
    with pytest.raises(InputError, match=message):
        load_problem(**ETOAC, **kwargs)


def test_bad_table_and_inline(tmp_path: Path) -> None:
    (tmp_path / "c.csv").write_text("shift,other\n1,2\n")
    with pytest.raises(InputError, match=r"needs the columns H1 and H2"):
        load_problem(**ETOAC, cosy=f"@{tmp_path / 'c.csv'}")
    (tmp_path / "case.toml").write_text(
        f'formula = "C4H8O2"\nh1 = "{ETOAC["h1"]}"\nhsqc = [{{dH = 4.12, colour = "red"}}]\n'
    )
    with pytest.raises(InputError, match=r"hsqc peak 1: unknown key 'colour'"):
        load_problem(tmp_path / "case.toml")


def test_cli_read_shows_correlations() -> None:
    runner = CliRunner()
    args = ["read", "--formula", MEPROP["formula"], "--h1", MEPROP["h1"], "--c13", MEPROP["c13"],
            "--hsqc", "3.67/51.6", "--hmbc", "3.67/174.9", "--cosy", "2.32/1.14", "--noesy", "3.67/2.32"]
    text = runner.invoke(app, args)
    assert text.exit_code == 0, text.output
    assert "2D           4 cross peaks (1 HSQC, 1 COSY, 1 HMBC, 1 NOESY)" in text.output
    assert "HMBC   3.67/174.9  1H #1 (3.67)  13C #1 (174.9)  constraint" in text.output
    doc = json.loads(runner.invoke(app, args + ["--json"]).output)
    assert doc["correlations_used"] == 3
    assert doc["correlations"][1] == {
        "kind": "COSY", "shift1": 2.32, "shift2": 1.14, "signal1": 1, "signal2": 2,
        "intensity": "", "note": "", "where": "--cosy item 1",
    }
    bad = runner.invoke(app, ["read", "--formula", "C4H8O2", "--h1", ETOAC["h1"], "--hmbc", "1.2"])
    assert bad.exit_code == 2 and "Traceback" not in bad.output


def test_doctests() -> None:
    from elucidate.report import correlations as report_mod

    for module in (parse_mod, corr_mod, report_mod):
        failed, _ = doctest.testmod(module)
        assert failed == 0


# --- constraint semantics -------------------------------------------------------


def test_signal_totals() -> None:
    # the scorer's integral tolerance +-(0.34 + 0.1 n)
    assert signal_totals(2.0) == (2,) and signal_totals(6.0) == (6,) and signal_totals(10.0) == (9, 10, 11)


def test_cosy_tells_propyl_acetate_from_ethyl_propanoate() -> None:
    # propyl acetate COSY: OCH2 (4.02) to CH2 (1.64), CH2 (1.64) to CH3 (0.94); all vicinal
    p = load_problem(**PRACE, cosy="4.02/1.64, 1.64/0.94")
    strict = strict_of(p)
    assert strict.reason(Graph.from_smiles("CCCOC(C)=O")) is None
    assert strict.reason(Graph.from_smiles("CCCC(=O)OC")) is None  # methyl butanoate: same chain, COSY alone cannot tell
    why = strict.reason(Graph.from_smiles("CCOC(=O)CC"))  # ethyl propanoate: no CH2-CH2
    assert why is not None and why.startswith("COSY 4.02/1.64 needs the 2H at 4.02 (t) and the 2H at 1.64 (sext)")
    assert "bonded atoms" in why


def test_cosy_ethyl_acetate() -> None:
    # ethyl acetate COSY 4.12/1.26 (CH2-CH3)
    p = load_problem(**ETOAC, cosy="4.12/1.26")
    strict = strict_of(p)
    assert strict.reason(Graph.from_smiles("CCOC(C)=O")) is None
    why = strict.reason(Graph.from_smiles("COCC(C)=O"))  # methoxyacetone: CH2 between C=O and O
    assert "no CH2 (or 2 equivalent CH) and CH3 (or 3 equivalent CH) are that close" in why
    assert long_of(p).reason(Graph.from_smiles("COCC(C)=O")) is None  # 4J CH2-C(=O)-CH3 in the long-range reading


def test_hmbc_tells_methyl_propanoate_from_ethyl_acetate() -> None:
    # methyl propanoate: HSQC (one bond) and HMBC OCH3 H to C=O (3J), CH3 H to C=O (3J)
    p = load_problem(**MEPROP, hsqc="3.67/51.6, 2.32/27.5, 1.14/9.2", hmbc="3.67/174.9, 1.14/174.9", cosy="2.32/1.14")
    strict = strict_of(p)
    assert strict.reason(Graph.from_smiles("CCC(=O)OC")) is None
    why = strict.reason(Graph.from_smiles("CCOC(C)=O"))
    assert why is not None and "HMBC 1.14/174.9" in why


def test_hsqc_puts_two_shifts_on_one_ch2() -> None:
    # ethyl vinyl ether HSQC: 6.47/151.8, 4.17/86.3, 3.97/86.3 (=CH2), 3.73/63.4, 1.29/14.5
    p = load_problem(**EVE, hsqc="6.47/151.8, 4.17/86.3, 3.97/86.3, 3.73/63.4, 1.29/14.5")
    strict = strict_of(p)
    assert strict.group_bounds() == {0: (0, 0), 2: (1, 4)}
    assert strict.reason(Graph.from_smiles("C=COCC")) is None
    # (E)-1-methoxypropene has no CH2 at all
    why = strict.reason(Graph.from_smiles("C/C=C/OC"))
    assert why is not None and "HSQC" in why


def test_dept_label_restricts_the_hsqc_carbon() -> None:
    p = load_problem(formula="C4H8O2", h1=ETOAC["h1"], c13="171.4 (C), 60.5 (CH3), 21.0, 14.2",
                     hsqc="4.12/60.5")
    why = strict_of(p).reason(Graph.from_smiles("CCOC(C)=O"))
    assert why is not None and "DEPT CH3" in why


def test_weak_peak_may_be_four_bonds() -> None:
    # a weak HMBC peak may be 4J: ethyl acetate CH3 (1.26) to C=O (H-C-C-O-C)
    strong = load_problem(**ETOAC, cosy="4.12/1.26", hmbc="1.26/171.4")
    weak = load_problem(**ETOAC, cosy="4.12/1.26", hmbc="1.26/171.4 (w)")
    g = Graph.from_smiles("CCOC(C)=O")
    assert strict_of(strong).reason(g) is not None
    assert strict_of(weak).reason(g) is None


# --- soundness: a structure with the cross peaks it implies is always admitted --


SOUNDNESS = [
    # (name, smiles): the full set of HSQC, vicinal COSY and 2J/3J HMBC peaks each
    # structure implies, one 1H signal per H environment and one 13C line per carbon
    # class (RDKit symmetry classes, computed independently of the check)
    ("ethyl acetate", "CCOC(C)=O"),
    ("methyl propanoate", "CCC(=O)OC"),
    ("propyl acetate", "CCCOC(C)=O"),
    ("toluene", "Cc1ccccc1"),
    ("p-xylene", "Cc1ccc(C)cc1"),
    ("ethylbenzene", "CCc1ccccc1"),
    ("isobutyl acetate", "CC(C)COC(C)=O"),
    ("tert-butyl methyl ether", "COC(C)(C)C"),
    ("cyclohexanone", "O=C1CCCCC1"),
    ("naphthalene", "c1ccc2ccccc2c1"),
    ("2-methylpyridine", "Cc1ccccn1"),
    ("diethyl ether", "CCOCC"),
    ("ethanol", "CCO"),
    ("4-methoxyacetophenone", "COc1ccc(C(C)=O)cc1"),
    ("N,N-dimethylacetamide", "CN(C)C(C)=O"),
    ("mesitylene", "Cc1cc(C)cc(C)c1"),
]


def _implied_problem(smiles: str, formula: str) -> Problem:
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False))
    dist = Chem.GetDistanceMatrix(mol)
    env: dict[int, list[int]] = {}
    for a in mol.GetAtoms():
        if a.GetTotalNumHs():
            env.setdefault(ranks[a.GetIdx()], []).append(a.GetIdx())
    carbons: dict[int, list[int]] = {}
    for a in mol.GetAtoms():
        if a.GetSymbol() == "C":
            carbons.setdefault(ranks[a.GetIdx()], []).append(a.GetIdx())
    envs = sorted(env.values())
    lines = sorted(carbons.values())
    h1 = tuple(
        H1Signal(1.0 + 0.1 * i, 1.0 + 0.1 * i, 1.0 + 0.1 * i, "s", (),
                 float(sum(mol.GetAtomWithIdx(x).GetTotalNumHs() for x in atoms)),
                 float(sum(mol.GetAtomWithIdx(x).GetTotalNumHs() for x in atoms)))
        for i, atoms in enumerate(envs)
    )
    # shifts 55-62 ppm: a window of constrain/data/c13_regions.csv that asks nothing of a carbon
    c13 = tuple(C13Signal(55.0 + 0.4 * j, len(atoms)) for j, atoms in enumerate(lines))
    peaks = []
    for i, atoms in enumerate(envs):
        for j, cs in enumerate(lines):
            d = min(dist[a][c] for a in atoms for c in cs)
            if d == 0:
                peaks.append(CrossPeak("HSQC", h1[i].shift, c13[j].shift, i, j))
            elif d in (1, 2):
                peaks.append(CrossPeak("HMBC", h1[i].shift, c13[j].shift, i, j))
    for i, k in combinations(range(len(envs)), 2):
        if min(dist[a][b] for a in envs[i] for b in envs[k]) == 1:
            peaks.append(CrossPeak("COSY", h1[i].shift, h1[k].shift, i, k))
    return Problem(parse_formula(formula), h1, c13, correlations=tuple(peaks))


@pytest.mark.parametrize("name, smiles", SOUNDNESS)
def test_true_structure_is_admitted(name: str, smiles: str) -> None:
    from rdkit import Chem
    from rdkit.Chem.rdMolDescriptors import CalcMolFormula

    problem = _implied_problem(smiles, CalcMolFormula(Chem.MolFromSmiles(smiles)))
    strict, *wide = correlation_evidence(problem)
    assert len(strict.peaks) >= 3
    g = Graph.from_smiles(smiles)
    assert strict.reason(g) is None, name
    for reading in wide:
        assert reading.reason(g) is None, name


def test_implied_peaks_discriminate_isomers() -> None:
    # the peaks p-xylene implies are not met by o- or m-xylene or ethylbenzene
    problem = _implied_problem("Cc1ccc(C)cc1", "C8H10")
    strict = correlation_evidence(problem)[0]
    for other in ("Cc1ccccc1C", "Cc1cccc(C)c1", "CCc1ccccc1"):
        assert strict.reason(Graph.from_smiles(other)) is not None, other


# --- solve ------------------------------------------------------------------------


def test_solve_builds_fewer_structures_with_2d() -> None:
    from elucidate.solve import solve

    plain = solve(load_problem(**MEPROP), time_limit_s=60)
    two_d = solve(load_problem(**MEPROP, hsqc="3.67/51.6, 2.32/27.5, 1.14/9.2",
                               hmbc="3.67/174.9, 1.14/174.9", cosy="2.32/1.14"), time_limit_s=60)
    built = dict(plain.counts)["generated"], dict(two_d.counts)["generated"]
    assert built[1] < built[0]
    assert [c.smiles for c in two_d.candidates] == ["CCC(=O)OC"]
    assert plain.candidates[0].smiles == "CCC(=O)OC"
    assert any(k.startswith("HSQC/COSY/HMBC correlations not met") for k, _ in two_d.rejected_counts)
    assert any("HSQC/COSY/HMBC correlations" in e for e in two_d.evidence)


def test_solve_relaxes_to_four_bonds() -> None:
    # ethyl acetate with a 4J HMBC peak (CH3 1.26 to C=O) not marked weak: the strict
    # reading rejects the truth, the long-range level finds it and says so
    from elucidate.solve import solve

    result = solve(load_problem(**ETOAC, hsqc="4.12/60.5, 2.05/21.0, 1.26/14.2", cosy="4.12/1.26",
                                hmbc="1.26/171.4"), time_limit_s=60)
    assert result.candidates[0].smiles == "CCOC(C)=O"
    assert result.relaxed[0].startswith("the 2-3-bond reading of the 2D correlations")
    assert "4-bond" in result.relaxed[0]


def test_relaxation_drops_one_class_at_a_time() -> None:
    # the ladder: 2-3 bonds, then 4J admitted, then without HMBC, then without 2D
    # (least certain first; common practice: HMBC peaks are the ones that may be 4J or misread)
    ev = correlation_evidence(load_problem(**ETOAC, hsqc="4.12/60.5, 2.05/21.0", cosy="4.12/1.26",
                                           hmbc="2.05/171.4"))
    assert [(e.key, e.tier) for e in ev] == [("2d", 0), ("2d-long-range", 1), ("2d-hsqc-cosy", 2)]
    assert [p.kind for p in ev[2].peaks] == ["HSQC", "HSQC", "COSY"]
    assert ev[1].relaxation == "the HMBC cross peaks (the least certain class; HSQC/COSY still hard)"
    assert ev[2].relaxation == "the HSQC/COSY cross peaks"


def test_solve_drops_a_wrong_hmbc_peak_and_says_so() -> None:
    # ethyl acetate (Gottlieb et al. 1997, recalled) with a deliberately wrong HMBC peak:
    # 1.26/21.0 (the ethyl CH3 H to the acetyl CH3, 5 bonds apart; the real peak is 2.05/21.0's
    # neighbour 2.05/171.4). No reading of 2-4 bonds meets it, so the HMBC class is dropped
    # (listed in relaxed) and the truth is found with HSQC/COSY still hard
    from elucidate.solve import solve

    result = solve(load_problem(**ETOAC, hsqc="4.12/60.5, 2.05/21.0, 1.26/14.2", cosy="4.12/1.26",
                                hmbc="2.05/171.4, 1.26/21.0"), time_limit_s=60)
    assert "CCOC(C)=O" in [c.smiles for c in result.candidates]
    assert any("the HMBC cross peaks (the least certain class; HSQC/COSY still hard)" in r
               for r in result.relaxed)


def test_explain_names_the_cross_peak() -> None:
    from elucidate.solve import explain

    e = explain(load_problem(**PRACE, cosy="4.02/1.64, 1.64/0.94"), "CCOC(=O)CC", time_limit_s=60)
    assert e.verdict == "rejected"
    assert any(r.startswith("COSY 4.02/1.64 needs") for r in e.reasons)


# --- per-candidate status and the reports -----------------------------------------

BUBZ = dict(
    # butyl benzoate, from memory (literature spectrum, CDCl3); cross peaks implied by the
    # structure (common practice: HSQC one bond, COSY vicinal, HMBC 2J/3J), 1.75/166.7 a 4J peak
    formula="C11H14O2",
    h1="8.04 (d, J = 7.6 Hz, 2H), 7.54 (t, J = 7.4 Hz, 1H), 7.43 (t, J = 7.6 Hz, 2H), 4.32 (t, J = 6.6 Hz, 2H), "
    "1.75 (quint, J = 6.8 Hz, 2H), 1.48 (sext, J = 7.4 Hz, 2H), 0.98 (t, J = 7.4 Hz, 3H)",
    c13="166.7, 132.8, 130.5, 129.5, 128.3, 64.8, 30.8, 19.3, 13.8",
    hsqc="8.04/129.5, 4.32/64.8, 1.75/30.8, 1.48/19.3, 0.98/13.8",
    cosy="4.32/1.75, 1.75/1.48, 1.48/0.98",
    hmbc="8.04/166.7, 4.32/166.7, 1.75/166.7",
)


def test_check_rows_name_the_atoms_and_the_4j_peak() -> None:
    p = load_problem(**BUBZ)
    rows = strict_of(p).check_rows(Graph.from_smiles("CCCCOC(=O)c1ccccc1"))
    status = {r.label: (r.status, r.atoms) for r in rows}
    # atoms in SMILES order: 0-3 butyl C (3 = OCH2), 4 O, 5 C=O carbon, 6 its O, 7 ipso, 8 and 12 ortho CH
    assert status["COSY 4.32/1.75"] == ("met", (3, 2))
    assert status["HMBC 4.32/166.7"] == ("met", (3, 5))
    assert status["HMBC 1.75/166.7"] == ("met (4 bonds)", (2, 5))
    assert status["HSQC 8.04/129.5"][0] == "met" and status["HSQC 8.04/129.5"][1] in ((8,), (12,))
    # the ester the other way round, phenyl pentanoate: the peaks cannot all hold in the
    # 2-3-bond reading, so some are met only 4 bonds away or in the widened reading
    other = strict_of(p).check_rows(Graph.from_smiles("CCCCC(=O)Oc1ccccc1"))
    assert {r.status for r in other} >= {"met", "met (4 bonds)", "met (long-range)"}


def test_solve_json_terminal_and_html_show_the_cross_peaks(tmp_path: Path) -> None:
    from elucidate.report import render_html
    from elucidate.report.terminal import solve_lines
    from elucidate.solve import solve

    result = solve(load_problem(**BUBZ), time_limit_s=60)
    best = result.candidates[0]
    assert best.smiles == "CCCCOC(=O)c1ccccc1"
    js = best.to_json()["correlations"]
    assert [r["label"] for r in js][:2] == ["HSQC 8.04/129.5", "HSQC 4.32/64.8"]
    assert all(r["status"].startswith("met") for r in js)
    text = "\n".join(solve_lines(result))
    assert "2D cross peaks on the best candidates" in text
    assert "HMBC 1.75/166.7  met, 4 bonds" in text
    page = render_html(result)
    assert "<h2>2D cross peaks</h2>" in page
    assert 'aria-label="2D correlations on candidate 1"' in page
    assert page == render_html(result)  # same input, same bytes


def test_a_wrong_peak_is_never_lost_silently() -> None:
    # butyl benzoate (BUBZ) with a deliberately wrong HMBC peak: the CH3 H at 0.98 to the
    # C=O (six bonds). The strict reading rejects the truth; either it is found after a
    # relaxation listed in relaxed, or the output names the peak no candidate meets
    from elucidate.report.correlations import unmet_by_all
    from elucidate.report.terminal import solve_lines
    from elucidate.solve import solve

    result = solve(load_problem(**{**BUBZ, "hmbc": "8.04/166.7, 0.98/166.7, 1.75/166.7"}), time_limit_s=60)
    assert correlation_evidence(result.problem)[0].reason(Graph.from_smiles("CCCCOC(=O)c1ccccc1")) is not None
    found = "CCCCOC(=O)c1ccccc1" in [c.smiles for c in result.candidates]
    assert (found and result.relaxed) or "HMBC 0.98/166.7" in unmet_by_all(result)
    if "HMBC 0.98/166.7" in unmet_by_all(result):
        assert "no candidate meets HMBC 0.98/166.7" in "\n".join(solve_lines(result))


def test_terminal_names_the_peak_no_candidate_meets() -> None:
    # two candidates that both fail one COSY peak (statuses made by hand to test the wording)
    from elucidate.model import Candidate, CheckRow, SolveResult
    from elucidate.report.terminal import solve_lines

    rows = (CheckRow("COSY", "COSY 4.12/1.26", "met", (1, 0)),
            CheckRow("COSY", "COSY 4.12/2.05", "not met", (), "COSY 4.12/2.05 needs ..."))
    cands = tuple(Candidate(i, smi, float(i), "consistent", (), checks=rows)
                  for i, smi in ((1, "CCOC(C)=O"), (2, "CCC(=O)OC")))
    text = "\n".join(solve_lines(SolveResult(load_problem(**ETOAC), True, cands)))
    assert "COSY 4.12/2.05  NOT MET  NOT MET" in text
    assert "no candidate meets COSY 4.12/2.05: check this cross peak" in text


# --- JCAMP-DX 2D peak tables and read-back without a 13C list ---------------------

# methyl propanoate HSQC as a JCAMP-DX 2D peak table (F2 = 1H, F1 = 13C; the layout of the
# JCAMP-DX NMR conventions, common practice); shifts from MEPROP (from memory)
HSQC_JDX = """##TITLE=methyl propanoate HSQC
##JCAMP-DX=6.0
##DATA TYPE=NMR PEAK TABLE
##NUM DIM=2
##.NUCLEUS=1H,13C
##PEAK TABLE=(F2,F1,Y..F2,F1,Y)
3.67, 51.6, 100
2.32, 27.5, 90
1.14, 9.2, 95
##END=
"""


def test_jcamp_2d_peak_table(tmp_path: Path) -> None:
    (tmp_path / "hsqc.jdx").write_text(HSQC_JDX)
    p = load_problem(**MEPROP, hsqc=f"@{tmp_path / 'hsqc.jdx'}")
    assert [(c.label, c.signal1, c.signal2) for c in p.correlations] == [
        ("HSQC 3.67/51.6", 0, 1), ("HSQC 2.32/27.5", 1, 2), ("HSQC 1.14/9.2", 2, 3)]
    # F1 listed first is read in its own order
    (tmp_path / "swapped.jdx").write_text(HSQC_JDX.replace("(F2,F1,Y..F2,F1,Y)", "(F1,F2,Y..F1,F2,Y)")
                                          .replace("3.67, 51.6", "51.6, 3.67").replace("2.32, 27.5", "27.5, 2.32")
                                          .replace("1.14, 9.2", "9.2, 1.14"))
    q = load_problem(**MEPROP, hsqc=f"@{tmp_path / 'swapped.jdx'}")
    assert q.correlations[0].label == "HSQC 3.67/51.6"


@pytest.mark.parametrize("text, message", [
    # a 1D peak table is not a 2D list
    ("##TITLE=x\n##JCAMP-DX=5.01\n##DATA TYPE=NMR SPECTRUM\n##PEAK TABLE=(XY..XY)\n3.67, 3\n##END=\n",
     "JCAMP-DX file without a 2D peak table"),
    (HSQC_JDX.replace("##NUM DIM=2\n", "##NUM DIM=2\n##UNITS=HZ, HZ\n"), "in Hz; give the shifts in ppm"),
    (HSQC_JDX.replace("(F2,F1,Y..F2,F1,Y)", "(A,B..A,B)"), "does not name its two shift axes"),
    (HSQC_JDX.replace("2.32, 27.5", "2.32, x"), "hsqc.jdx line 8"),
])
def test_jcamp_2d_refusals_are_one_line(tmp_path: Path, text: str, message: str) -> None:
    (tmp_path / "hsqc.jdx").write_text(text)
    with pytest.raises(InputError, match=re.escape(message)):
        load_problem(**MEPROP, hsqc=f"@{tmp_path / 'hsqc.jdx'}")
    runner = CliRunner()
    out = runner.invoke(app, ["read", "--formula", MEPROP["formula"], "--h1", MEPROP["h1"],
                              "--hsqc", f"@{tmp_path / 'hsqc.jdx'}"])
    assert out.exit_code == 2 and "Traceback" not in out.output


def test_cli_read_without_13c_list_shows_the_lines_from_the_cross_peaks() -> None:
    runner = CliRunner()
    out = runner.invoke(app, ["read", "--formula", MEPROP["formula"], "--h1", MEPROP["h1"],
                              "--hsqc", "3.67/51.6, 2.32/27.5, 1.14/9.2", "--hmbc", "3.67/174.9, 1.14/174.9"])
    assert out.exit_code == 0, out.output
    assert "5  HMBC  1.14/174.9  1H #3 (1.14)  13C #1 (174.9)  constraint" in out.output
    assert "no 13C list given: 4 13C line(s) taken from" in out.output
    assert "13C signals  4, 4 C (formula 4 C); read off the HSQC/HMBC cross peaks" in out.output
