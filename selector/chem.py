"""Small RDKit helpers (RDKit is imported lazily so the command line starts fast)."""
from __future__ import annotations

import functools


@functools.lru_cache(maxsize=1)
def _rdkit():
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    return Chem


def _parse(smiles):
    """The RDKit molecule of a SMILES string, or None (not text, empty, or unreadable)."""
    if not isinstance(smiles, str) or not smiles.strip():
        return None
    return _rdkit().MolFromSmiles(smiles.strip())


@functools.lru_cache(maxsize=4096)
def canonical_smiles(smiles: str) -> str | None:
    """RDKit canonical SMILES, or None when the string does not parse."""
    mol = _parse(smiles)
    return None if mol is None else _rdkit().MolToSmiles(mol)


def flat_smiles(smiles: str) -> str | None:
    """Canonical SMILES without stereo and isotope labels (``C[C@@H](O)CC`` -> ``CCC(C)O``,
    ``[2H]C(Cl)(Cl)Cl`` -> ``ClC(Cl)Cl``), or None when the string does not parse."""
    Chem = _rdkit()
    mol = _parse(smiles)
    if mol is None:
        return None
    for a in mol.GetAtoms():
        a.SetIsotope(0)
    return Chem.MolToSmiles(Chem.RemoveHs(mol), isomericSmiles=False)


@functools.lru_cache(maxsize=4096)
def molar_mass(smiles: str) -> float:
    """Molar mass (g/mol, RDKit's average atomic masses) of a SMILES, NaN when it does not parse."""
    Chem = _rdkit()
    mol = Chem.MolFromSmiles(smiles.strip()) if isinstance(smiles, str) and smiles.strip() else None
    if mol is None:
        return float("nan")
    from rdkit.Chem import Descriptors

    return float(Descriptors.MolWt(mol))


@functools.lru_cache(maxsize=4096)
def inchikey(smiles: str) -> str | None:
    """Standard InChIKey of a SMILES, or None when it does not parse."""
    Chem = _rdkit()
    mol = Chem.MolFromSmiles(smiles.strip()) if isinstance(smiles, str) else None
    if mol is None:
        return None
    try:
        return Chem.MolToInchiKey(mol) or None
    except Exception:  # noqa: BLE001 - InChI generation failures are answered with None
        return None
