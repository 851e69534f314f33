"""Reasons in a chemist's words: what a signal needs, why a structure fails.

The sentences are built from the data (shift, multiplicity, integral) and the
structure's predicted environments, never looked up from a table of canned
verdicts, so each one names the peaks and groups involved.
"""

from __future__ import annotations

from collections import Counter
from typing import Sequence

from elucidate.model import Environment, H1Signal

__all__ = [
    "describe_signal",
    "signal_needs",
    "environment_sizes",
    "integral_conflict",
    "too_large",
    "too_few_environments",
    "shift_note",
    "multiplicity_note",
]

_MULT_NAMES = {
    "s": "singlet", "d": "doublet", "t": "triplet", "q": "quartet",
    "quint": "quintet", "sext": "sextet", "sept": "septet", "m": "multiplet",
}


def describe_signal(signal: H1Signal, h: int | None = None) -> str:
    """``'3H singlet at 2.05 ppm'``."""
    n = h if h is not None else round(signal.h_count)
    mult = _MULT_NAMES.get(signal.multiplicity, signal.multiplicity)
    if signal.broad:
        mult = "broad " + mult
    if signal.shift_high - signal.shift_low > 0.05:
        where = f"{signal.shift_high:.2f}–{signal.shift_low:.2f} ppm"
    else:
        where = f"{signal.shift:.2f} ppm"
    return f"{n}H {mult} at {where}"


def _vicinal(signal: H1Signal) -> int | None:
    p = signal.pattern
    if p is None or signal.broad:
        return None
    return sum(k - 1 for k in p)


def signal_needs(signal: H1Signal, h: int | None = None) -> str:
    """What a signal usually stands for (n+1 rule, common practice).

    Examples
    --------
    >>> from elucidate.model import H1Signal
    >>> signal_needs(H1Signal(1.20, 1.20, 1.20, "s", (), 9, 9))
    'three equivalent CH3 groups on one carbon without H'
    >>> signal_needs(H1Signal(1.26, 1.26, 1.26, "t", (7.1,), 3, 3))
    'a CH3 next to a CH2 (2 neighbouring H)'
    """
    n = h if h is not None else round(signal.h_count)
    k = _vicinal(signal)
    if n == 9 and k == 0:
        return "three equivalent CH3 groups on one carbon without H"
    if n == 6 and k == 1:
        return "two equivalent CH3 groups on one CH (an isopropyl unit)"
    if n == 6 and k == 0:
        return "two equivalent CH3 groups without H neighbours"
    if n == 3:
        if k == 0:
            return "a CH3 with no H on the neighbouring atom"
        if k == 1:
            return "a CH3 on a CH (1 neighbouring H)"
        if k == 2:
            return "a CH3 next to a CH2 (2 neighbouring H)"
    if n == 2 and k is not None:
        return f"a CH2 (or two equivalent CH) with {k} neighbouring H"
    if n == 1 and k is not None:
        return f"a CH (or XH) with {k} neighbouring H"
    if n == 5 and 6.5 <= signal.shift <= 8.0:
        return "five aromatic H, as in a monosubstituted benzene ring"
    if k is not None:
        return f"{n} equivalent H with {k} neighbouring H"
    return f"{n} H in one signal"


def environment_sizes(envs: Sequence[Environment]) -> str:
    """``'3H ×2, 2H, 1H (exchangeable)'`` — the structure's environments."""
    counts = Counter((e.h_count, e.exchangeable) for e in envs)
    parts = []
    for (h, exch), n in sorted(counts.items(), key=lambda kv: (-kv[0][0], kv[0][1])):
        part = f"{h}H" + (" (exchangeable)" if exch else "")
        parts.append(part + (f" ×{n}" if n > 1 else ""))
    return ", ".join(parts) if parts else "none"


def integral_conflict(
    signals: Sequence[H1Signal], hs: Sequence[int], envs: Sequence[Environment]
) -> str:
    """Sentence for a set of signals whose integrals cannot all be matched."""
    sizes = environment_sizes(envs)
    if len(signals) == 1:
        s, h = signals[0], hs[0]
        return (
            f"needs a {describe_signal(s, h)} ({signal_needs(s, h)}): "
            f"no set of this structure's H environments ({sizes}) adds up to {h}H there"
        )
    listed = "; ".join(describe_signal(s, h) for s, h in zip(signals, hs))
    return (
        f"cannot give these signals their integrals at the same time: {listed} — "
        f"the structure's H environments are {sizes}"
    )


def too_large(env: Environment, largest: int) -> str:
    """An environment bigger than any signal."""
    return (
        f"has {env.h_count} equivalent H ({env.label or 'one environment'}), "
        f"but no observed signal holds more than {largest}H"
    )


def too_few_environments(n_env: int, n_signals: int) -> str:
    return (
        f"has only {n_env} distinct H environment{'s' if n_env != 1 else ''} "
        f"for {n_signals} observed signals"
    )


def shift_note(env: Environment, signal: H1Signal, h: int, deviation: float) -> str:
    """``'2H quartet at 4.12 ppm: predicted 2.32 for CH2 (α to C=O), 1.80 ppm off'``."""
    label = f" for {env.label}" if env.label else ""
    return (
        f"{describe_signal(signal, h)}: predicted {env.shift:.2f}{label}, "
        f"{abs(deviation):.2f} ppm off (typical error {env.uncertainty:.2f})"
    )


def multiplicity_note(env: Environment, signal: H1Signal, h: int) -> str:
    mult = _MULT_NAMES.get(env.multiplicity, env.multiplicity)
    label = f" ({env.label})" if env.label else ""
    return f"{describe_signal(signal, h)}: this structure predicts a {mult}{label}"
