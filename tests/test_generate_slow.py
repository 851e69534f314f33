"""The largest check values; run with ELUCIDATE_SLOW=1 (about a minute).

Counts from the design notes' list of check values (shared/reference/trade-facts.md), "counted by one fast method
only": this generator is the second, independent method that agrees.
"""

from __future__ import annotations

import os
import re

import pytest

from elucidate.generate import Spec, count
from elucidate.model import Formula

pytestmark = pytest.mark.skipif(
    not os.environ.get("ELUCIDATE_SLOW"), reason="set ELUCIDATE_SLOW=1 for the largest counts"
)


def F(text: str) -> Formula:
    counts = {el: int(n) if n else 1 for el, n in re.findall(r"([A-Z][a-z]?)(\d*)", text)}
    order = ["C", "H"] + sorted(el for el in counts if el not in ("C", "H"))
    return Formula(tuple((el, counts[el]) for el in order if el in counts))


@pytest.mark.parametrize(
    "formula, expected",
    [
        ("C9H12O", 338723),  # trade-facts.md (338761 bond-order graphs)
        ("C10H8", 486681),  # trade-facts.md
        ("C11H24", 159),  # OEIS A000602
        ("C17H36", 24894),  # OEIS A000602
    ],
)
def test_large_counts(formula: str, expected: int) -> None:
    assert count(Spec(F(formula))) == expected
