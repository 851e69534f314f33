"""Fragments (super-atoms with open valences) as gadgets on the unit graph."""

from __future__ import annotations

from dataclasses import dataclass, field

from elucidate.errors import InputError
from elucidate.generate.decorate import Label, Structure
from elucidate.generate.spec import Spec

__all__ = ["FragmentPlan", "plan_fragments"]


@dataclass
class FragmentPlan:
    """How the fragments of a spec enter the search."""

    units: bool = False
    unit_labels: list[tuple[Label, int]] = field(default_factory=list)
    element_counts: dict[str, int] = field(default_factory=dict)
    internal_extra: int = 0

    def expand(self, st: Structure, spec: Spec) -> Structure | None:
        raise InputError("fragments are not supported yet")


def plan_fragments(spec: Spec) -> FragmentPlan:
    if spec.fragments:
        raise InputError("fragments are not supported yet")
    if spec.atoms is not None:
        f = spec.formula.as_dict()
        got: dict[str, int] = {}
        for a in spec.atoms:
            got[a.element] = got.get(a.element, 0) + 1
            got["H"] = got.get("H", 0) + a.h_count
        if {k: v for k, v in got.items() if v} != {k: v for k, v in f.items() if v}:
            raise InputError(f"atom specs do not add up to the formula {spec.formula.hill}")
    return FragmentPlan()
