"""``predict``: the 1H (and 13C) spectrum of one structure, with derivations."""

from __future__ import annotations

import functools
import math
from typing import Any

from elucidate.errors import InputError
from elucidate.model import Coupling, Environment, Prediction
from elucidate.predict import tables
from elucidate.predict.carbon import carbon_shifts
from elucidate.predict.environments import diastereotopic, ranks, sites, stereocentres
from elucidate.predict.graph import build_graph
from elucidate.predict.increments import (
    Shift,
    aldehyde_shift,
    alkene_shift,
    alkyne_shift,
    aromatic_shift,
    hetero_h_shift,
    special_shift,
    sp3_shift,
)
from elucidate.predict.multiplicity import partners, pattern

__all__ = ["predict", "SOLVENTS", "DEFAULT_FIELD_MHZ"]

#: Field used for the second-order check when none is given (MHz).
DEFAULT_FIELD_MHZ = 400.0

#: Accepted solvent names (lower case, without spaces) → canonical name.
SOLVENTS: dict[str, str] = {
    "cdcl3": "CDCl3", "chloroform-d": "CDCl3", "chloroform": "CDCl3",
    "dmso-d6": "DMSO-d6", "dmso": "DMSO-d6", "(cd3)2so": "DMSO-d6",
    "acetone-d6": "acetone-d6", "acetone": "acetone-d6", "(cd3)2co": "acetone-d6",
    "c6d6": "C6D6", "benzene-d6": "C6D6",
    "cd3cn": "CD3CN", "acetonitrile-d3": "CD3CN",
    "cd3od": "CD3OD", "methanol-d4": "CD3OD",
    "d2o": "D2O",
    "cd2cl2": "CD2Cl2", "dichloromethane-d2": "CD2Cl2",
}

#: Δν/J below which a non-aromatic pattern is reported as m (first-order
#: spectra need Δν well above J; ratios of 6–10 are quoted — common practice,
#: from memory).  Aromatic rings are read first order down to Δν/J = 1.
FIRST_ORDER_MIN_RATIO = 6.0

#: Aromatic H of one ring (three or more H environments) predicted within this
#: range overlap and are reported as m, as chemists do (e.g. the five H of
#: toluene; common practice).
AROMATIC_OVERLAP_PPM = 0.15

#: Solvents whose deuterium exchanges with OH/NH/SH.
_EXCHANGING = {"CD3OD", "D2O"}


def predict(smiles_or_mol: Any, *, solvent: str | None = None,
            field_mhz: float | None = None) -> Prediction:
    """Predict the 1H spectrum (environments, shifts, multiplicities) and 13C
    shifts of one structure by additive increment methods.

    Parameters
    ----------
    smiles_or_mol : str or rdkit.Chem.Mol
        The structure.  Environment ``atoms`` are heavy-atom indices in the
        order of the SMILES (RDKit's atom order for a Mol).
    solvent : str, optional
        NMR solvent (CDCl3, DMSO-d6, …); changes the class values of OH/NH and
        notes exchange in D2O/CD3OD.  Unknown names give a warning.
    field_mhz : float, optional
        1H frequency, used to decide where first-order patterns fail
        (default 400 MHz).

    Returns
    -------
    elucidate.model.Prediction

    Raises
    ------
    InputError
        The SMILES does not parse, or the field is not a positive number.

    Examples
    --------
    >>> p = predict("CCOC(C)=O")
    >>> [(e.atoms, e.h_count, e.multiplicity) for e in p.environments]
    [((0,), 3, 't'), ((1,), 2, 'q'), ((4,), 3, 's')]
    """
    if field_mhz is not None:
        try:
            f = float(field_mhz)
        except (TypeError, ValueError) as err:
            raise InputError(f"field '{field_mhz}': not a number of MHz") from err
        if not math.isfinite(f) or f <= 0:
            raise InputError(f"field '{field_mhz}': must be a positive number of MHz")
        field_mhz = f
    solvent_name, warnings = _solvent(solvent)
    if isinstance(smiles_or_mol, str):
        return _cached(smiles_or_mol.strip(), solvent_name, field_mhz, tuple(warnings))
    from rdkit import Chem

    if not isinstance(smiles_or_mol, Chem.Mol):
        raise InputError(f"structure {smiles_or_mol!r}: expected a SMILES string or an RDKit molecule")
    from rdkit import rdBase

    mol = Chem.Mol(smiles_or_mol)
    block = rdBase.BlockLogs()
    try:
        Chem.SanitizeMol(mol)
        if any(a.GetAtomicNum() == 1 for a in mol.GetAtoms()):
            mol = Chem.RemoveHs(mol)
    except (ValueError, RuntimeError) as err:  # RDKit sanitisation errors
        raise InputError(f"structure '{Chem.MolToSmiles(smiles_or_mol)}': not a valid molecule ({err})") from err
    finally:
        del block
    return _predict(mol, Chem.MolToSmiles(mol), solvent_name, field_mhz, tuple(warnings))


def _solvent(solvent: str | None) -> tuple[str | None, list[str]]:
    if solvent is None or not solvent.strip():
        return None, []
    key = "".join(solvent.split()).lower()
    if key in SOLVENTS:
        return SOLVENTS[key], []
    return solvent.strip(), [f"solvent '{solvent.strip()}' not known; class values for CDCl3 used"]


def _parse(smiles: str) -> Any:
    from rdkit import Chem, rdBase

    if not smiles:
        raise InputError("SMILES '': empty structure")
    block = rdBase.BlockLogs()
    try:
        mol = Chem.MolFromSmiles(smiles)
    finally:
        del block
    if mol is None:
        raise InputError(f"SMILES '{smiles}': not a valid structure (RDKit could not parse or sanitise it)")
    return mol


@functools.lru_cache(maxsize=2048)
def _cached(smiles: str, solvent: str | None, field: float | None, warnings: tuple[str, ...]) -> Prediction:
    return _predict(_parse(smiles), smiles, solvent, field, warnings)


def _predict(mol: Any, smiles: str, solvent: str | None, field: float | None,
             warnings: tuple[str, ...]) -> Prediction:
    g = build_graph(mol)
    rk = ranks(mol)
    stereo = g.stereo
    subs: dict[tuple[int, int], str] = {}
    ring_cache: dict[frozenset[int], Any] = {}
    site_list = sites(g, rk, stereo, subs)

    # environments: equal canonical rank (and, for split =CH2, the same cis group)
    env_key: dict[tuple[int, int], int] = {}
    env_of: list[int] = []
    members: list[list[int]] = []
    for k, (s, _) in enumerate(site_list):
        tag = -2 if not s.tag else (-1 if s.cis_item == -1 else rk[s.cis_item])
        key = (rk[s.atom], tag)
        if key not in env_key:
            env_key[key] = len(members)
            members.append([])
        env_of.append(env_key[key])
        members[env_key[key]].append(k)

    centres: list[int] | None = None
    shifts: list[Shift] = []
    for ks in members:
        s, kind = site_list[ks[0]]
        shifts.append(_shift(g, mol, s, kind, solvent, subs, ring_cache))

    coupl = partners(g, site_list, env_of)
    dia_env: list[bool] = []
    for ks in members:
        s, kind = site_list[ks[0]]
        dia = False
        if kind == "sp3" and g.hs[s.atom] == 2:
            if centres is None:
                centres = stereocentres(mol)
            dia = diastereotopic(g, rk, s.atom, centres)
        dia_env.append(dia)
    fld = field or DEFAULT_FIELD_MHZ
    # spread of predicted shifts over the H environments of each aromatic ring system
    ring_shifts: dict[frozenset[int], list[float]] = {}
    for e, ks in enumerate(members):
        s0, kind0 = site_list[ks[0]]
        if kind0 == "aromatic" and s0.atom in g.aro_system:
            ring_shifts.setdefault(g.aro_system[s0.atom], []).append(shifts[e].shift)
    # (a ring with two H environments, such as a para-disubstituted one, is read as
    # two doublets however close they are)
    ring_spread = {k: max(v) - min(v) for k, v in ring_shifts.items() if len(v) > 2}
    jtab = tables.couplings()
    envs: list[Environment] = []
    for e, ks in enumerate(members):
        rep = ks[0]
        s, kind = site_list[rep]
        sh = shifts[e]
        agg: dict[tuple[int, str], int] = {}
        for k2, h, ckind in coupl[rep]:
            agg[(env_of[k2], ckind)] = agg.get((env_of[k2], ckind), 0) + h
        cps = tuple(
            Coupling(environment=pe, h_count=h, j_hz=jtab[ck]["j_hz"], kind=ck)
            for (pe, ck), h in sorted(agg.items())
        )
        second = False
        deriv = list(sh.derivation)
        for c in cps:
            dnu = abs(shifts[c.environment].shift - sh.shift) * fld
            arom = kind == "aromatic" and site_list[members[c.environment][0]][1] == "aromatic"
            limit = 1.0 if arom else FIRST_ORDER_MIN_RATIO
            if c.j_hz >= 3.0 and dnu < limit * c.j_hz:
                second = True
                deriv.append(f"note: Δν/J = {dnu / c.j_hz:.1f} to environment {c.environment} "
                             f"at {fld:g} MHz: not first order, reported as m")
                break
        if not second and dia_env[e] and cps:
            second = True
            deriv.append("note: diastereotopic CH2 with neighbours: reported as m")
        elif not second and g.hs[s.atom] < 3 and any(dia_env[c.environment] for c in cps):
            second = True
            deriv.append("note: coupled to a diastereotopic CH2: reported as m")
        elif not second and kind in ("sp3", "alkene") and _ring6_vicinal(g, s.atom, cps, members, site_list):
            second = True
            deriv.append("note: ring H coupled to ring H (six-membered or larger ring): "
                         "conformers make the pattern complex, reported as m (common practice)")
        elif not second and kind == "aromatic" and cps:
            spread = ring_spread.get(g.aro_system.get(s.atom, frozenset()), 1.0)
            if spread < AROMATIC_OVERLAP_PPM:
                second = True
                deriv.append(f"note: all H of this ring predicted within {spread:.2f} ppm: "
                             "overlapping, reported as m (common practice)")
        mult = "s" if sh.exchangeable else pattern([(c.h_count, c.j_hz) for c in cps], second)
        if sh.exchangeable and solvent in _EXCHANGING:
            deriv.append(f"note: exchanges with {solvent}; usually not observed")
        atoms = tuple(sorted({site_list[k][0].atom for k in ks}))
        dia = dia_env[e]
        if dia:
            deriv.append("note: diastereotopic CH2; the two H may give separate signals")
        envs.append(Environment(
            index=e,
            atoms=atoms,
            h_count=sum(site_list[k][0].h_count for k in ks),
            shift=round(sh.shift, 2),
            uncertainty=round(sh.uncertainty, 2),
            multiplicity=mult,
            couplings=cps,
            exchangeable=sh.exchangeable,
            diastereotopic=dia,
            label=sh.label,
            derivation=tuple(deriv),
            kind=sh.klass,
        ))
    carbons = carbon_shifts(g, mol, rk, subs, ring_cache)
    return Prediction(smiles=smiles, environments=tuple(envs), carbons=carbons, warnings=warnings)


def _ring6_vicinal(g: Any, atom: int, cps: tuple[Coupling, ...], members: list[list[int]],
                   site_list: list[Any]) -> bool:
    """True if H on ring atom ``atom`` (ring of 6 or more) couples vicinally
    to H on another atom of the same ring."""
    rings = [g.rings[r] for r in g.atom_rings[atom] if len(g.rings[r]) >= 6]
    if not rings:
        return False
    for c in cps:
        if not c.kind.startswith("vicinal"):
            continue
        for k in members[c.environment]:
            other = site_list[k][0].atom
            if other in g.nbrs[atom] and any(other in r for r in rings):
                return True
    return False


def _shift(g: Any, mol: Any, s: Any, kind: str, solvent: str | None,
           subs: dict[tuple[int, int], str], ring_cache: dict[frozenset[int], Any]) -> Shift:
    if kind == "sp3":
        return sp3_shift(g, s.atom, subs)
    if kind == "alkene":
        return alkene_shift(g, s.atom, s, subs)
    if kind == "aromatic":
        return aromatic_shift(g, mol, s.atom, subs, ring_cache)
    if kind == "XH":
        return hetero_h_shift(g, s.atom, solvent)
    if kind == "aldehyde":
        return aldehyde_shift(g, s.atom, solvent)
    if kind == "alkyne":
        return alkyne_shift(g, s.atom, solvent)
    if kind == "allene":
        return special_shift("allene", "=CH", solvent, "alkene")
    if kind == "imine":
        return special_shift("imine", "CH=N", solvent, "other")
    if g.is_sp3_carbon(s.atom) or g.el[s.atom] != "C":
        return special_shift("sp3_other", "CH", solvent, "other",
                             note="note: no increment rule for this carbon; coarse class value")
    return special_shift("sp2_other", "CH", solvent, "other",
                         note="note: no increment rule for this carbon; coarse class value")
