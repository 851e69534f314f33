"""Fuzz every parser: random text, random numbers, mangled real inputs.

Whatever comes in, a parser either returns a result or raises our InputError
(one line) — never another exception.
"""

from __future__ import annotations

import tempfile
from pathlib import Path
from typing import Any, Callable

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from elucidate.errors import InputError
from elucidate.parse import (
    normalise_multiplicity,
    parse_c13,
    parse_formula,
    parse_h1,
    problem_from_toml,
    read_peak_text,
    validate_smarts,
)

CASES = Path(__file__).resolve().parents[1] / "cases"
FUZZ = settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])

REAL_FORMULAS = ["C9H10O2", "C4H8O2", "C7H14O2", "C6H5Cl", "C5H5N", "C9 H10 O", "CH3COOCH2CH3", "C4H12Si"]
REAL_H1 = [
    "1H NMR (400 MHz, CDCl3) δ 7.36–7.28 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H).",
    "4.12 (2H, q, J 7.1 Hz), 2.05 (3H, s), 1.26 (3H, t, J 7.1 Hz)",
    "6.72 (dd, J = 17.6, 10.9 Hz, 1H); 5.75 (d, J = 17.6 Hz, 1H); 5.24 (d, J = 10.9 Hz, 1H)",
    "3.87 (d, 1.00), 2.33 (q, 1.01), 1.92 (m, 0.49), 1.14 (t, 1.52), 0.93 (d, 3.03)",
    "1.92 (br s, 1H, OH), 3.50 (2H, app t, J 6.5 Hz, CH2)",
    "7.36–7.28 (m, 5H), 7.26 (CHCl3), 5.11 (s, 2H), 2.17 (s, acetone), 1.56 (br s, H2O), 0.07 (s, grease)",
    "7.38 (m, 6H, ArH + CHCl3), 3.49 (s, residual solvent), 2.50 (quint, DMSO-d5), 0.00 (impurity)",
]
REAL_C13 = [
    "13C NMR (101 MHz, CDCl3) δ 171.1 (C), 60.4 (CH2), 21.0 (CH3), 14.2 (CH3).",
    "170.9, 136.0, 128.6 (2C), 128.3, 128.2 (2 × CH), 66.3, 21.0",
    "124.3 (q, J = 272 Hz), 30.1 (t)",
    "170.9 (C), 128.6 (2 × CH₃), 77.16 (CDCl3), 77.0 (t, CDCl3), 66.3 (CH2 x 2), 29.7 (grease)",
]
REAL_CSV = [
    "shift,mult,J (Hz),nH\n7.36-7.28,m,,5\n5.11,s,,2\n4.12,q,7.1,2\n",
    "δ (ppm)\tMult.\tIntegral\n7,36\tm\t2.50\n5.11\ts\t1.00\n",
    "Shift;Mult;Integral\n7,36-7,28;m;5,00\n5,11;s;2,00\n",
    "shift,nC,DEPT\n197.8,1,C\n129.3,2,CH\n",
    "shift,mult,nH,assignment\n7.26,s,,CHCl3\n5.11,s,2,OCH2\n1.56,br s,,water\n",
]
REAL_JCAMP = [
    (CASES / "u033-h1.jdx").read_text(encoding="utf-8"),
    "##TITLE=a\n##PEAK ASSIGNMENTS=(XYMA)\n(3.87, 2, D, <OCH2>)\n(0.93, 6, D, <(CH3)2>)\n##END=\n",
    "##TITLE=s\n##PEAK ASSIGNMENTS=(XYMA)\n(7.26, , S, <CHCl3>)\n(0.93, 6, D, <(CH3)2>)\n##END=\n",
    "##TITLE=hz\n##.OBSERVE FREQUENCY=400\n##XUNITS=HZ\n##XFACTOR=0.5\n##PEAK TABLE=(XYW..XYW)\n3096, 2, 1.2\n",
]
REAL_TOML = [p.read_text(encoding="utf-8") for p in sorted(CASES.glob("*.toml"))]

JUNK = "0123456789.,;:()[]{}<>=-–—−+/×xXeEHhJjzZ \t\n#$@\"'δ^smdtqbrapCNOPSFIl"


@st.composite
def mangled(draw: Any, samples: list[str]) -> str:
    """A real input with a few random edits: delete, insert, replace, duplicate, cut."""
    text = draw(st.sampled_from(samples))
    for _ in range(draw(st.integers(1, 4))):
        op = draw(st.sampled_from(["delete", "insert", "replace", "duplicate", "cut"]))
        i = draw(st.integers(0, max(0, len(text) - 1)))
        ch = draw(st.sampled_from(JUNK) | st.characters())
        if op == "delete":
            text = text[:i] + text[i + 1 :]
        elif op == "insert":
            text = text[:i] + ch + text[i:]
        elif op == "replace":
            text = text[:i] + ch + text[i + 1 :]
        elif op == "duplicate":
            j = draw(st.integers(i, len(text)))
            text = text[:j] + text[i:j] + text[j:]
        else:
            text = text[:i]
    return text


NUMBERS = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(-10**30, 10**30),
    st.floats(-50, 300),
).map(lambda v: repr(v) if isinstance(v, float) else str(v))


@st.composite
def peak_text(draw: Any) -> str:
    """Peak-list-shaped text with random numbers in every slot."""
    parts = []
    for _ in range(draw(st.integers(1, 5))):
        mult = draw(st.sampled_from(["s", "d", "dd", "br s", "m", "q", "x", ""]))
        parts.append(
            f"{draw(NUMBERS)} ({mult}, J = {draw(NUMBERS)}, {draw(NUMBERS)} Hz, {draw(NUMBERS)}H)"
        )
    return draw(st.sampled_from([", ", "; "])).join(parts)


def text_inputs(samples: list[str]) -> st.SearchStrategy[str]:
    return st.one_of(st.text(max_size=150), st.text(alphabet=JUNK, max_size=150), mangled(samples))


def survives(func: Callable[..., Any], *args: Any, **kwargs: Any) -> None:
    try:
        func(*args, **kwargs)
    except InputError as err:
        assert "\n" not in str(err)


@FUZZ
@given(text_inputs(REAL_FORMULAS) | NUMBERS)
def test_formula_fuzz(text: str) -> None:
    survives(parse_formula, text)


@FUZZ
@given(text_inputs(REAL_H1) | peak_text(), st.sampled_from([None, "C9H10O2", "C7H14O2", "C20H42"]))
def test_h1_fuzz(text: str, formula: str | None) -> None:
    survives(parse_h1, text, formula=parse_formula(formula) if formula else None)


@FUZZ
@given(text_inputs(REAL_C13) | peak_text())
def test_c13_fuzz(text: str) -> None:
    survives(parse_c13, text)


@FUZZ
@given(text_inputs(REAL_CSV), st.sampled_from(["1H", "13C"]), st.sampled_from(["p.csv", "p.tsv", "p.txt"]))
def test_table_fuzz(text: str, nucleus: str, name: str) -> None:
    survives(read_peak_text, text, name, nucleus, parse_formula("C9H10O2"))


@FUZZ
@given(text_inputs(REAL_JCAMP), st.sampled_from(["1H", "13C"]))
def test_jcamp_fuzz(text: str, nucleus: str) -> None:
    survives(read_peak_text, text, "p.jdx", nucleus, parse_formula("C7H14O2"))


@FUZZ
@given(text_inputs(REAL_TOML))
def test_case_toml_fuzz(text: str) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        survives(problem_from_toml, text, Path(tmp))


@settings(max_examples=100, deadline=None)
@given(st.text(max_size=40))
def test_multiplicity_and_smarts_fuzz(text: str) -> None:
    result = normalise_multiplicity(text)
    assert result is None or result.label in ("", "s", "d", "t", "q", "quint", "sext", "sept", "m") or set(
        result.label
    ) <= set("dtq")
    survives(validate_smarts, [text], "--require")
