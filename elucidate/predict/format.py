"""Plain-text rendering of a :class:`~elucidate.model.Prediction` (no I/O:
returns a string for the CLI to print)."""

from __future__ import annotations

from elucidate.model import Prediction

__all__ = ["render_prediction"]


def _partners(env_index: int, p: Prediction) -> str:
    env = p.environments[env_index]
    if env.exchangeable:
        return "none (exchangeable, broad)"
    if not env.couplings:
        return "none"
    return "; ".join(f"env {c.environment} ({c.h_count}H, J≈{c.j_hz:g} Hz {c.kind})" for c in env.couplings)


def render_prediction(p: Prediction, *, field_mhz: float | None = None) -> str:
    """One block per H environment (atoms, H count, δ ± uncertainty,
    multiplicity, partners, exchangeable flag, derivation), then 13C."""
    from elucidate.predict.core import DEFAULT_FIELD_MHZ

    lines = [f"Predicted 1H NMR of {p.smiles} (additive increments; first-order at "
             f"{field_mhz or DEFAULT_FIELD_MHZ:g} MHz)", ""]
    head = f"{'env':>3}  {'atoms':<12} {'H':>2}  {'δ/ppm':>6} {'±':>5}  {'mult':<5} {'label':<26} flags"
    lines.append(head)
    lines.append("-" * len(head))
    for e in p.environments:
        flags = []
        if e.exchangeable:
            flags.append("exchangeable")
        if e.diastereotopic:
            flags.append("diastereotopic")
        atoms = ",".join(str(a) for a in e.atoms)
        lines.append(f"{e.index:>3}  {atoms:<12} {e.h_count:>2}  {e.shift:>6.2f} {e.uncertainty:>5.2f}  "
                     f"{e.multiplicity:<5} {e.label:<26} {' '.join(flags)}")
        lines.append(f"     partners: {_partners(e.index, p)}")
        lines.append(f"     derivation: {' '.join(d for d in e.derivation if not d.startswith('note:') and not d.startswith('exchangeable'))}")
        for d in e.derivation:
            if d.startswith("note:") or d.startswith("exchangeable"):
                lines.append(f"     {d}")
    if p.carbons:
        lines += ["", "Predicted 13C shifts", ""]
        head = f"{'atoms':<12} {'H':>2}  {'δ/ppm':>6} {'±':>5}  derivation"
        lines.append(head)
        lines.append("-" * len(head))
        for c in p.carbons:
            atoms = ",".join(str(a) for a in c.atoms)
            main = " ".join(d for d in c.derivation if not d.startswith("note:"))
            lines.append(f"{atoms:<12} {c.attached_h:>2}  {c.shift:>6.1f} {c.uncertainty:>5.1f}  {main}")
            for d in c.derivation:
                if d.startswith("note:"):
                    lines.append(f"{'':<24}{d}")
    for w in p.warnings:
        lines.append(f"warning: {w}")
    return "\n".join(lines)
