"""Molecular features for :mod:`selector.estimation` (RDKit is imported lazily).

Features of one molecule (all computed from its RDKit graph, hydrogens implicit):

* a subset of RDKit's 2-D descriptors (``rdkit.Chem.Descriptors``; the slow or noisy ones -
  QED, BCUT2D, Ipc, SPS - are left out), which include RDKit's ``fr_*`` functional-group counts;
* counts of polar groups matched by SMARTS patterns of our own (hydroxyl, carboxylic acid,
  N-H, carbonyl, ester, ether, nitrile, nitro, halogens, sulfur and phosphorus groups);
* those counts divided by the McGowan characteristic volume (HSP are cohesive energy
  densities, i.e. group energies divided by a volume, so per-volume counts are the natural
  scale);
* a crude dipole descriptor: Gasteiger-Marsili partial charges (Tetrahedron 36 (1980) 3219),
  each heavy atom with its hydrogens, times 2-D depiction coordinates of the canonical atom order, |sum q r|, with the charge
  totals, and |mu| / V^0.5 and mu^2 / V (the scale of the Hansen-Beerbower relation
  dP = 37.4 mu / V^0.5, dipole in debye - here only as a feature, not as that formula);
* hashed Morgan (circular, radius 2) substructure counts.

McGowan characteristic volume (Abraham and McGowan, Chromatographia 23 (1987) 243-246):
V_x = sum of atom increments - 6.56 per bond (cm^3/mol); the increments below are quoted
from memory and serve here only as a size feature, not as a published result.

Validation of a molecule before estimation is in :func:`check_molecule`.
"""
from __future__ import annotations

import functools

import numpy as np

#: Elements accepted for estimation (organic molecules of the kind the training tables carry).
ORGANIC_ELEMENTS = frozenset({"C", "H", "N", "O", "S", "P", "F", "Cl", "Br", "I", "Si", "B"})

# McGowan atom increments, cm^3/mol (from memory, see module docstring).
_MCGOWAN = {"C": 16.35, "H": 8.71, "O": 12.43, "N": 14.39, "F": 10.48, "Cl": 20.95, "Br": 26.21,
            "I": 34.53, "S": 22.91, "P": 24.87, "Si": 26.83, "B": 18.32, "Se": 27.81}

# Polar and other groups; names are ours, patterns written for this project.
GROUP_SMARTS = {
    "oh_alcohol": "[OX2H][CX4,c;!$(C=O)]",
    "oh_any": "[OX2H]",
    "cooh": "[CX3](=O)[OX2H1]",
    "nh2": "[NX3;H2;!$(NC=O)]",
    "nh": "[NX3;H1;!$(NC=O)]",
    "amide_nh": "[NX3;H1,H2][CX3]=O",
    "amide": "[NX3][CX3]=[OX1]",
    "carbonyl": "[CX3]=[OX1]",
    "ketone": "[#6][CX3](=O)[#6]",
    "aldehyde": "[CX3H1](=O)",
    "ester": "[#6][CX3](=O)[OX2][#6]",
    "carbonate": "[OX2][CX3](=O)[OX2]",
    "ether": "[OD2]([#6;!$(C=O)])[#6;!$(C=O)]",
    "nitrile": "[NX1]#[CX2]",
    "nitro": "[$([NX3](=O)=O),$([NX3+](=O)[O-])]",
    "arom_n": "[n]",
    "tert_amine": "[NX3;H0;!$(NC=O);!$(N=*);!$([N+])]([#6])([#6])[#6]",
    "f": "[F]",
    "cl": "[Cl]",
    "br": "[Br]",
    "i": "[I]",
    "thiol": "[SX2H]",
    "sulfide": "[SX2]([#6])[#6]",
    "sulfoxide": "[SX3](=O)",
    "sulfone": "[SX4](=O)(=O)",
    "phosphate": "[PX4](=O)",
    "n_oxide_or_charge": "[+,-]",
    "c_double": "[CX3]=[CX3]",
    "c_triple": "[CX2]#[CX2]",
    "arom_ring_atom": "[a]",
    "donor": "[$([O,S;H1]),$([N;H1,H2,H3])]",
    "acceptor": "[$([O;H0;X2]),$([O;X1]),$([n;H0]),$([N;X1]),$([N;H0;X3;!$(NC=O);!$(N-a)])]",
}

_SLOW = ("qed", "BCUT2D", "Ipc", "AvgIpc", "SPS")
# Left out for speed without loss: a graph-complexity index that costs as much as ten other
# descriptors and carried < 0.2 % of the tree importance, a count that is always zero for
# accepted molecules (radicals are refused), and RDKit functional-group counts that occur in
# fewer than five of the 1,181 training compounds (trees cannot learn from them).
_DROPPED = frozenset({
    "BertzCT", "NumRadicalElectrons",
    "fr_HOCCN", "fr_N_O", "fr_alkyl_carbamate", "fr_amidine", "fr_azide", "fr_azo", "fr_barbitur",
    "fr_benzodiazepine", "fr_diazo", "fr_dihydropyridine", "fr_guanido", "fr_hdrzine", "fr_hdrzone",
    "fr_imide", "fr_isothiocyan", "fr_lactam", "fr_morpholine", "fr_nitroso", "fr_oxazole",
    "fr_oxime", "fr_piperzine", "fr_prisulfonamd", "fr_quatN", "fr_sulfonamd", "fr_tetrazole",
    "fr_thiazole", "fr_thiocyan", "fr_urea"})
# Descriptor families RDKit computes in one C++ call: name prefix -> (function, number of bins)
_VECTOR_FAMILIES = ("SMR_VSA", "SlogP_VSA", "PEOE_VSA")

_ESTATE = {"MaxEStateIndex": np.max, "MinEStateIndex": np.min,
           "MaxAbsEStateIndex": lambda e: np.max(np.abs(e)), "MinAbsEStateIndex": lambda e: np.min(np.abs(e))}

MORGAN_BITS = 512
MORGAN_RADIUS = 2
SIM_BITS = 2048  # bit fingerprint used for the applicability domain (Tanimoto)


@functools.lru_cache(maxsize=1)
def _rdkit():
    from rdkit import Chem, RDLogger
    from rdkit.Chem import Descriptors, rdFingerprintGenerator

    RDLogger.DisableLog("rdApp.*")
    descs = [(n, f) for n, f in Descriptors._descList if not n.startswith(_SLOW) and n not in _DROPPED]
    patt = {k: Chem.MolFromSmarts(v) for k, v in GROUP_SMARTS.items()}
    bad = [k for k, p in patt.items() if p is None]
    if bad:  # pragma: no cover - patterns are fixed
        raise RuntimeError(f"invalid SMARTS for {bad}")
    gen_count = rdFingerprintGenerator.GetMorganGenerator(radius=MORGAN_RADIUS, fpSize=MORGAN_BITS)
    gen_bits = rdFingerprintGenerator.GetMorganGenerator(radius=2, fpSize=SIM_BITS)
    return Chem, descs, patt, gen_count, gen_bits


def feature_names() -> list[str]:
    """Names of the columns returned by :func:`featurize`."""
    _, descs, patt, _, _ = _rdkit()
    names = [f"rd_{n}" for n, _ in descs]
    names += ["mcgowan_volume", "heavy_atoms", "n_h"]
    names += [f"grp_{k}" for k in patt]
    names += [f"pv_{k}" for k in patt]  # per 100 cm^3/mol of McGowan volume
    names += DIPOLE_NAMES
    names += [f"morgan_{i}" for i in range(MORGAN_BITS)]
    return names


DIPOLE_NAMES = ["dip2d", "charge_abs_sum", "charge_max", "charge_min", "dip2d_per_sqrt_v", "dip2d_sq_per_v"]


def dipole_features(mol, volume: float) -> list[float]:
    """2-D charge-dipole features of one molecule (see module docstring); canonical atom order,
    so that every SMILES of the same molecule gives the same numbers."""
    Chem = _rdkit()[0]
    from rdkit.Chem import rdDepictor, rdPartialCharges

    m = Chem.MolFromSmiles(Chem.MolToSmiles(mol))  # hydrogens stay implicit: group charges
    rdDepictor.Compute2DCoords(m)
    rdPartialCharges.ComputeGasteigerCharges(m)
    q = np.nan_to_num(np.array([a.GetDoubleProp("_GasteigerCharge") + a.GetDoubleProp("_GasteigerHCharge")
                                for a in m.GetAtoms()]))
    pos = m.GetConformer().GetPositions()[:, :2]
    mu = float(np.hypot(*(q[:, None] * pos).sum(axis=0)))
    v = max(volume, 1.0)
    return [mu, float(np.abs(q).sum()), float(q.max()), float(q.min()), mu / np.sqrt(v), mu * mu / v]


def mcgowan_volume(mol) -> float:
    """McGowan characteristic volume of an RDKit molecule, cm^3/mol (see module docstring)."""
    total = 0.0
    n_atoms = 0
    for a in mol.GetAtoms():
        total += _MCGOWAN.get(a.GetSymbol(), 20.0)
        h = a.GetTotalNumHs()
        total += h * _MCGOWAN["H"]
        n_atoms += 1 + h
    n_rings = mol.GetRingInfo().NumRings()
    n_bonds = n_atoms - 1 + n_rings  # bonds of the molecule with explicit hydrogens
    return total - 6.56 * n_bonds


def check_molecule(smiles) -> tuple[object | None, str]:
    """Parse and vet one SMILES for estimation.

    Returns ``(mol, "")`` for an acceptable molecule, or ``(None, reason)``. Refused, each with
    its own reason: non-text or empty input, SMILES that RDKit cannot parse, several fragments
    (salts and mixtures: estimate each neutral component on its own), polymer repeat units
    (``*``), elements outside C H N O S P F Cl Br I Si B (metals, most inorganics), molecules
    without carbon, a net charge (ions; charge-separated neutral groups such as nitro are
    accepted) and radicals. Isotope labels are removed (:func:`strip_isotopes`): the returned
    molecule is the parent.
    """
    Chem = _rdkit()[0]
    if not isinstance(smiles, str) or not smiles.strip():
        return None, "empty SMILES"
    s = smiles.strip()
    if "*" in s:
        return None, ("polymer repeat unit or wildcard atom '*' is not supported; estimate a small "
                      "model compound of the repeat unit (cap the ends with H or methyl)")
    mol = Chem.MolFromSmiles(s)
    if mol is None:
        return None, "not a valid SMILES (RDKit could not read it)"
    if mol.GetNumAtoms() == 0:
        return None, "empty molecule"
    symbols = {a.GetSymbol() for a in mol.GetAtoms()}
    others = sorted(symbols - ORGANIC_ELEMENTS)
    outside = (f"contains {', '.join(others)}: metals and most inorganic elements are outside what the "
               "training tables cover (only C H N O S P F Cl Br I Si B)")
    if "." in s or len(Chem.GetMolFrags(mol)) > 1:
        # ferrocene written as ions is a metal compound, not a salt to split: say both
        if others:
            return None, f"several disconnected parts (a salt or a mixture) and {outside}"
        return None, ("several disconnected parts (a salt or a mixture); estimate each neutral "
                      "component on its own")
    if others:
        return None, outside
    if "C" not in symbols:
        return None, "no carbon atom: inorganic compounds are outside what the model covers"
    charge = sum(a.GetFormalCharge() for a in mol.GetAtoms())
    if charge != 0:
        return None, (f"net charge {charge:+d}: ions are not supported; give the neutral molecule "
                      "(a salt's HSP is not that of its ions)")
    if any(a.GetNumRadicalElectrons() for a in mol.GetAtoms()):
        return None, "radical (unpaired electrons): give a closed-shell molecule"
    return strip_isotopes(mol)[0], ""


def strip_isotopes(mol):
    """``(parent, changed)``: the molecule with its isotope labels removed (deuterium becomes
    ordinary hydrogen, 13C ordinary carbon) and whether there were any. The HSP and molar volume
    of an isotopologue are close to those of its parent (common practice), so isotopologues are
    matched and estimated as the parent."""
    if mol is None or not any(a.GetIsotope() for a in mol.GetAtoms()):
        return mol, False
    Chem = _rdkit()[0]
    m = Chem.RWMol(mol)
    for a in m.GetAtoms():
        a.SetIsotope(0)
    return Chem.RemoveHs(m.GetMol()), True


def featurize(mols) -> np.ndarray:
    """Feature matrix (n_molecules x len(feature_names())) of RDKit molecules, float64."""
    Chem, descs, patt, gen_count, _ = _rdkit()
    n_desc = len(descs)
    n_grp = len(patt)
    n_dip = len(DIPOLE_NAMES)
    width = n_desc + 3 + 2 * n_grp + n_dip + MORGAN_BITS
    X = np.zeros((len(mols), width))
    pats = list(patt.values())
    from rdkit.Chem.EState import EState

    from rdkit.Chem import rdMolDescriptors as rdm

    estate_pos = {n: j for j, (n, _) in enumerate(descs) if n in _ESTATE}
    # families computed in one call: (function, [(column, bin index)])
    fam = {"SMR_VSA": rdm.SMR_VSA_, "SlogP_VSA": rdm.SlogP_VSA_, "PEOE_VSA": rdm.PEOE_VSA_}
    vec = {k: (f, []) for k, f in fam.items()}
    crippen = []
    plain = []
    for j, (n, f) in enumerate(descs):
        if n in _ESTATE:
            continue
        pre = n.rstrip("0123456789")
        if pre in vec and n[len(pre):].isdigit():
            vec[pre][1].append((j, int(n[len(pre):]) - 1))
        elif n in ("MolLogP", "MolMR"):
            crippen.append((j, 0 if n == "MolLogP" else 1))
        else:
            plain.append((j, f))
    vec = [(f, np.array([c for c, _ in cols], int), np.array([b for _, b in cols], int))
           for f, cols in vec.values() if cols]
    for i, m in enumerate(mols):
        row = X[i]
        if estate_pos:  # the four E-state extremes from one E-state computation, shared with
            e = np.asarray(EState.EStateIndices(m), dtype=float)  # the E-state VSA descriptors
            m._eStateIndices = e
            for n, j in estate_pos.items():
                row[j] = _ESTATE[n](e) if e.size else np.nan
        for f, cols, bins in vec:
            row[cols] = np.asarray(f(m), dtype=float)[bins]
        if crippen:
            lp_mr = rdm.CalcCrippenDescriptors(m)
            for j, b in crippen:
                row[j] = lp_mr[b]
        for j, f in plain:
            try:
                row[j] = f(m)
            except Exception:  # noqa: BLE001 - a descriptor that fails is left missing
                row[j] = np.nan
        v = mcgowan_volume(m)
        k = n_desc
        row[k] = v
        row[k + 1] = m.GetNumHeavyAtoms()
        row[k + 2] = sum(a.GetTotalNumHs() for a in m.GetAtoms())
        k += 3
        counts = np.array([len(m.GetSubstructMatches(p)) for p in pats], dtype=float)
        row[k:k + n_grp] = counts
        row[k + n_grp:k + 2 * n_grp] = counts * (100.0 / max(v, 1.0))
        k += 2 * n_grp
        try:
            row[k:k + n_dip] = dipole_features(m, v)
        except Exception:  # noqa: BLE001 - charges or coordinates that fail stay missing
            row[k:k + n_dip] = np.nan
        k += n_dip
        row[k:] = gen_count.GetCountFingerprintAsNumPy(m)
    X[~np.isfinite(X)] = np.nan
    # clip absurd descriptor values (some RDKit descriptors explode on odd graphs)
    np.clip(X, -1e6, 1e6, out=X)
    return X


def similarity_bits(mols) -> np.ndarray:
    """Morgan bit fingerprints (radius 2, 2048 bits) as a boolean matrix, for Tanimoto similarity."""
    _, _, _, _, gen_bits = _rdkit()
    out = np.zeros((len(mols), SIM_BITS), dtype=bool)
    for i, m in enumerate(mols):
        out[i] = gen_bits.GetFingerprintAsNumPy(m).astype(bool)
    return out


def tanimoto(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Tanimoto similarity matrix between two boolean fingerprint matrices (vectorised)."""
    a = a.astype(np.float32)
    b = b.astype(np.float32)
    inter = a @ b.T
    na = a.sum(axis=1)[:, None]
    nb = b.sum(axis=1)[None, :]
    union = na + nb - inter
    with np.errstate(invalid="ignore", divide="ignore"):
        s = np.where(union > 0, inter / union, 1.0)
    return s


def murcko_scaffold(mol) -> str:
    """Bemis-Murcko scaffold SMILES (empty for acyclic molecules)."""
    from rdkit.Chem.Scaffolds import MurckoScaffold

    try:
        return MurckoScaffold.MurckoScaffoldSmiles(mol=mol)
    except Exception:  # noqa: BLE001
        return ""
