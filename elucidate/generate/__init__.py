"""generate stage: every constitution of a formula, once each, pruned by constraints.

Public API (see docs/generate.md)::

    from elucidate.generate import Spec, AtomSpec, FragmentSpec, Options, Limits, Stats, generate, count
"""

from elucidate.generate.isomers import count, generate
from elucidate.generate.spec import AtomSpec, FragmentSpec, Limits, Options, Spec, Stats

__all__ = ["Spec", "AtomSpec", "FragmentSpec", "Options", "Limits", "Stats", "generate", "count"]
