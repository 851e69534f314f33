"""predict: properties that must hold for any molecule.

* Environments equal the orbits of H-bearing atoms under the molecule's
  graph automorphisms, found the slow, obviously-correct way (every
  substructure match of the molecule onto itself) — a reference beside the
  fast canonical-rank grouping.
* For random molecules: prediction never fails, H counts add up, vicinal
  couplings are mutual, every environment has a derivation.
"""

from __future__ import annotations

import math
import random

import pytest

from elucidate.predict import predict

_VICINAL = ("vicinal", "alkene", "ortho aromatic", "five-ring aromatic", "meta aromatic", "propargylic")


def orbits(smiles: str) -> set[frozenset[int]]:
    """Automorphism orbits of the H-bearing heavy atoms (reference method)."""
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    matches = mol.GetSubstructMatches(mol, uniquify=False, useChirality=False, maxMatches=100000)
    out: set[frozenset[int]] = set()
    for a in mol.GetAtoms():
        if a.GetTotalNumHs():
            out.add(frozenset(m[a.GetIdx()] for m in matches))
    return out


REFERENCE = [
    "CCOCC", "Cc1ccc(C)cc1", "Cc1cc(C)cc(C)c1", "CC(C)C(C)C", "OCC(O)CO", "c1ccc2ccccc2c1",
    "CC(=O)OCC(=O)C", "CC1CCC(C)CC1", "C1CC2CCC1C2", "Clc1ccc(Cl)c(Cl)c1", "CCN(CC)CC",
    "OC(=O)CCC(=O)O", "c1ccncc1", "CC(C)(C)c1ccc(O)cc1", "C1COCCO1", "CCCCC(CC)CC",
]


@pytest.mark.parametrize("smiles", REFERENCE)
def test_environments_are_automorphism_orbits(smiles: str) -> None:
    # environments whose atoms are sp3 or aromatic (no split =CH2 here)
    envs = {frozenset(e.atoms) for e in predict(smiles).environments}
    assert envs == orbits(smiles)


def _random_molecules(n: int, seed: int) -> list[str]:
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    rng = random.Random(seed)
    elements = ["C"] * 8 + ["N", "O", "S", "Cl", "F", "Br"]
    valence = {"C": 4, "N": 3, "O": 2, "S": 2, "Cl": 1, "F": 1, "Br": 1}
    bond = {1: Chem.BondType.SINGLE, 2: Chem.BondType.DOUBLE, 3: Chem.BondType.TRIPLE}
    out: list[str] = []
    while len(out) < n:
        k = rng.randint(2, 10)
        rw = Chem.RWMol()
        els = [rng.choice(elements) for _ in range(k)]
        for e in els:
            rw.AddAtom(Chem.Atom(e))
        used = [0] * k
        ok = True
        for i in range(1, k):
            j = rng.randrange(i)
            room = min(valence[els[i]] - used[i], valence[els[j]] - used[j])
            if room < 1:
                ok = False
                break
            o = min(rng.choice([1, 1, 1, 1, 2, 3]), room)
            rw.AddBond(i, j, bond[o])
            used[i] += o
            used[j] += o
        if not ok:
            continue
        i, j = rng.sample(range(k), 2)
        if (rw.GetBondBetweenAtoms(i, j) is None and used[i] < valence[els[i]]
                and used[j] < valence[els[j]] and rng.random() < 0.4):
            rw.AddBond(i, j, bond[1])
        try:
            mol = rw.GetMol()
            Chem.SanitizeMol(mol)
        except (ValueError, RuntimeError):
            continue
        out.append(Chem.MolToSmiles(mol))
    return out


RANDOM = _random_molecules(300, seed=20261202) + [
    "c1ccc(-c2ccncc2)cc1", "O=C(O)c1ccc2[nH]ccc2c1", "CC(=O)c1cccs1", "Cc1ccco1",
    "C=C(C)C(=O)OCC1CO1", "N#Cc1ccc(C=O)cc1", "CC(C)=CC(=O)C", "C1=CCC=C1",
]


def test_random_molecules_properties() -> None:
    from rdkit import Chem

    for smiles in RANDOM:
        p = predict(smiles)
        mol = Chem.MolFromSmiles(smiles)
        assert sum(e.h_count for e in p.environments) == sum(a.GetTotalNumHs() for a in mol.GetAtoms()), smiles
        envs = {e.index: e for e in p.environments}
        for e in p.environments:
            assert math.isfinite(e.shift) and e.uncertainty > 0 and e.derivation, smiles
            for c in e.couplings:
                assert c.environment != e.index, smiles
                if c.kind.startswith(_VICINAL) and not envs[c.environment].exchangeable:
                    back = [b for b in envs[c.environment].couplings if b.environment == e.index]
                    assert back, (smiles, e.index, c)
        carbons = sorted(a for c in p.carbons for a in c.atoms)
        assert carbons == [a.GetIdx() for a in mol.GetAtoms() if a.GetSymbol() == "C"], smiles
