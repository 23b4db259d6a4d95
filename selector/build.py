"""Rebuild the bundled solvent library ``parameters/liquids.csv`` from the ``chemicals``/``thermo`` libraries.

Run with ``python -m selector.build`` (add ``--check`` to compare against the committed file
instead of writing it).

Sources
-------
* Hansen solubility parameters: ``chemicals.solubility`` tables, only the three published
  source keys below (values stored there in Pa^0.5, divided by 1000 here to MPa^0.5):

  - ``ALSHERI_HANSEN``: Alshehri, Tula, You, Gani, AIChE J. 68 (2022) e17469.
  - ``MANUEL_RUBEN_2022``: Diaz de los Rios, Murcia Belmonte, SN Applied Sciences 4 (2022) 185.
  - ``WDR_SCHRIER``: J. Schrier, "Hansen Solubility Parameters", Wolfram Data Repository (2020).

* Everything else (names, SMILES, melting/boiling point, molar volume, density, vapour
  pressure, enthalpy of vaporisation, expansion coefficient, viscosity, flash point,
  auto-ignition temperature, exposure limit): ``thermo.Chemical`` at 25 C and 1 atm, which in
  turn draws on the ``chemicals`` data tables; the method each correlation used is recorded.

Rule for the kept HSP value
---------------------------
When more than one source carries a compound, the three components are taken *together* from
the first source in ``SOURCE_PRIORITY`` (``ALSHERI_HANSEN`` first: the most recent peer-reviewed
compilation; then ``MANUEL_RUBEN_2022``; then ``WDR_SCHRIER``). Components are never mixed across
sources, and a compound's values are never changed by hand. ``hsp_note`` (empty otherwise)
records two things, both only where the sources disagree by more than 1 MPa^0.5:

* a *reviewed choice*: ``parameters/hsp_choices.csv`` names, for a few compounds, the source
  whose values match the handbook value (each reason given there, from memory); that source is
  kept instead of the first one;
* a *suspected misfiled row*: a source's three values equal, all three, a row that a table files
  under another compound of a different molecular formula (isomers may share values honestly),
  e.g. ALSHERI_HANSEN gives tetrachloroethylene the values of 1,1,2,2-tetrachloroethane
  (:func:`copied_rows`). Which of the two compounds the values belong to cannot be told from
  the tables, so this is only noted, on both compounds when the other one is carried by a single
  table (nothing else would note it there); "(not kept)" marks a note on a row that is not the
  kept one. A reviewed choice settles it where the handbook value is known: the note is then
  dropped where the choice says the values belong.

``hsp_spread`` is the largest difference, over the three components, between any two
sources; ``sources_disagree`` is true when it exceeds 1 MPa^0.5 (whatever was kept).

Liquid at 25 C means a known melting point below 298.15 K and a known boiling point above it.
Missing data stay missing (empty in the CSV), never invented.
"""
from __future__ import annotations

import argparse
import math
import os
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

SOURCE_PRIORITY = ("ALSHERI_HANSEN", "MANUEL_RUBEN_2022", "WDR_SCHRIER")
SOURCE_CITATIONS = {
    "ALSHERI_HANSEN": "Alshehri, Tula, You, Gani, AIChE J. 68 (2022) e17469",
    "MANUEL_RUBEN_2022": "Diaz de los Rios, Murcia Belmonte, SN Applied Sciences 4 (2022) 185",
    "WDR_SCHRIER": "Schrier, Hansen Solubility Parameters, Wolfram Data Repository (2020)",
}
DISAGREE_LIMIT = 1.0  # MPa^0.5
T25 = 298.15

PARAMETERS_DIR = Path(__file__).resolve().parent.parent / "parameters"
LIBRARY_CSV = PARAMETERS_DIR / "liquids.csv"
HSP_CHOICES_CSV = PARAMETERS_DIR / "hsp_choices.csv"

COLUMNS = [
    "name", "cas", "smiles", "inchikey", "formula", "molar_mass",
    "delta_d", "delta_p", "delta_h", "hsp_source", "hsp_sources_available", "hsp_spread",
    "sources_disagree", "hsp_note",
    "molar_volume", "molar_volume_estimated", "density", "melting_point_c", "boiling_point_c", "flash_point_c",
    "autoignition_c", "vapour_pressure_kpa", "antoine_a", "antoine_b", "antoine_c",
    "antoine_tmin_c", "antoine_tmax_c", "hvap_kj_mol", "expansion_coeff", "viscosity_mpa_s",
    "viscosity_estimated", "critical_temperature_c", "exposure_limit", "exposure_limit_unit", "short_term_limit",
    "short_term_limit_unit", "synonyms",
    "melting_point_source", "boiling_point_source", "volume_method", "expansion_method", "vapour_pressure_method",
    "viscosity_method", "flash_point_source", "exposure_limit_source", "reactive_reason", "data_note",
]


def hsp_tables() -> dict[str, pd.DataFrame]:
    """Return the three allowed HSP tables in MPa^0.5, keyed by source key."""
    from chemicals import solubility

    solubility._load_solubility_data()
    tables = {
        "ALSHERI_HANSEN": solubility.alsheri_hansen_data,
        "MANUEL_RUBEN_2022": solubility.manuel_ruben_2022_data,
        "WDR_SCHRIER": solubility.wdr_schrier_data,
    }
    out = {}
    for key, df in tables.items():
        t = df[["HANSEN_DELTA_D", "HANSEN_DELTA_P", "HANSEN_DELTA_H"]].astype(float) / 1000.0
        t.columns = ["delta_d", "delta_p", "delta_h"]
        t = t.dropna()
        out[key] = t[~t.index.duplicated(keep="first")]
    return out


def _identity(cas: str) -> tuple[str | None, str | None]:
    """(common name, molecular formula) of a CAS number from ``chemicals``; (None, None) if unknown."""
    import chemicals.identifiers as ci

    try:
        c = ci.search_chemical(cas)
    except Exception:  # noqa: BLE001 - CAS numbers chemicals does not know
        return None, None
    return getattr(c, "common_name", None), getattr(c, "formula", None)


def _triple_key(values) -> tuple:
    """The match key of three HSP values: rounded to the tables' 0.1 MPa^0.5 (one rule for every
    comparison of rows)."""
    return tuple(np.round(np.asarray(values, dtype=float), 1).tolist())


def copied_rows(tables: dict[str, pd.DataFrame], identity=_identity) -> dict[tuple[str, str], tuple[str, str]]:
    """Rows of the published tables that look filed under the wrong compound.

    A row ``(source, cas)`` is suspect when the sources disagree on the compound by more than
    :data:`DISAGREE_LIMIT` and its three values equal (:func:`_triple_key`) a row that a table
    files under another CAS number whose molecular formula is known and differs from this
    compound's (isomers may honestly share values). Returns ``{(source, cas): (other_source,
    other_cas)}``. The tables cannot tell which of the two compounds the values belong to.
    ``identity`` maps a CAS number to ``(name, formula)``.
    """
    owners: dict[tuple, list] = {}
    for key in SOURCE_PRIORITY:
        if key not in tables:
            continue
        t = tables[key]
        for cas, row in zip(t.index, t.to_numpy(float)):
            owners.setdefault(_triple_key(row), []).append((key, cas))
    cas_all = sorted(set().union(*[set(t.index) for t in tables.values()]))
    out = {}
    for cas in cas_all:
        present = [k for k in SOURCE_PRIORITY if k in tables and cas in tables[k].index]
        if len(present) < 2:
            continue
        vals = np.array([tables[k].loc[cas].to_numpy(dtype=float) for k in present])
        if (vals.max(axis=0) - vals.min(axis=0)).max() <= DISAGREE_LIMIT:
            continue
        mine = identity(cas)[1]
        if not mine:
            continue
        for key, v in zip(present, vals):
            for osrc, other in owners.get(_triple_key(v), []):
                if other == cas:
                    continue
                theirs = identity(other)[1]
                if theirs and theirs != mine:
                    out[(key, cas)] = (osrc, other)
                    break
    return out


def hsp_choices(path: Path = None, identity=None) -> pd.DataFrame:
    """The reviewed source choices (``parameters/hsp_choices.csv``), indexed by CAS, validated:
    known source keys, one row per CAS, a reason on every row, and (``identity`` given) the name
    given is the CAS number's. :func:`merged_hsp` checks them against the tables."""
    path = HSP_CHOICES_CSV if path is None else Path(path)
    df = pd.read_csv(path, dtype=str, keep_default_na=False)
    need = {"cas", "name", "keep_source", "reason"}
    if not need <= set(df.columns):
        raise ValueError(f"{path}: needs the columns {sorted(need)}, has {list(df.columns)}")
    bad = sorted(set(df["keep_source"]) - set(SOURCE_PRIORITY))
    if bad:
        raise ValueError(f"{path}: unknown source key(s) {bad}; use one of {list(SOURCE_PRIORITY)}")
    if df["cas"].duplicated().any():
        raise ValueError(f"{path}: CAS {sorted(set(df['cas'][df['cas'].duplicated()]))} listed twice")
    empty = df.loc[df["reason"].str.strip() == "", "cas"].tolist()
    if empty:
        raise ValueError(f"{path}: no reason given for {empty}")
    if identity is not None:
        # a plain name from parameters/names.csv counts as the CAS number's name too
        plain = pd.read_csv(NAMES_CSV, dtype=str).groupby("cas")["name"].agg(lambda s: set(s.str.lower()))
        for cas, name in zip(df["cas"], df["name"]):
            theirs = identity(cas)[0]
            if theirs and theirs.lower() != name.lower() and name.lower() not in plain.get(cas, set()):
                raise ValueError(f"{path}: CAS {cas} is {theirs!r} in chemicals, not {name!r}")
    return df.set_index("cas")


def _settled(tables, choices, key, cas, other) -> bool:
    """True when ``other``'s reviewed choice keeps values different from the row ``(key, cas)``
    that it shares: the shared values then belong to ``cas``."""
    if other not in choices.index:
        return False
    kept = tables.get(choices.at[other, "keep_source"])
    if kept is None or other not in kept.index:
        return False
    return _triple_key(kept.loc[other].to_numpy(float)) != _triple_key(tables[key].loc[cas].to_numpy(float))


def merged_hsp(tables: dict[str, pd.DataFrame] | None = None, choices: pd.DataFrame | None = None,
               identity=_identity) -> pd.DataFrame:
    """All compounds with HSP, one row per CAS, with the kept value, the disagreement and the
    ``hsp_note`` on a reviewed choice or a suspected copied row (rule in the module doc)."""
    tables = hsp_tables() if tables is None else tables
    choices = hsp_choices(identity=identity) if choices is None else choices
    copied = copied_rows(tables, identity)
    cas_all = sorted(set().union(*[set(t.index) for t in tables.values()]))
    present_of = {cas: [k for k in SOURCE_PRIORITY if k in tables and cas in tables[k].index] for cas in cas_all}
    unknown = sorted(set(choices.index) - set(cas_all))
    if unknown:
        raise ValueError(f"hsp_choices.csv: CAS {unknown} is in none of the published tables")
    notes: dict[str, list[str]] = {cas: [] for cas in cas_all}
    picks: dict[str, int] = {}
    values: dict[str, tuple[np.ndarray, float]] = {}
    for cas in cas_all:
        present = present_of[cas]
        vals = np.array([tables[k].loc[cas].to_numpy(dtype=float) for k in present])
        spread = float((vals.max(axis=0) - vals.min(axis=0)).max()) if len(vals) > 1 else 0.0
        values[cas] = (vals, spread)
        pick = 0
        if cas in choices.index:
            want = choices.at[cas, "keep_source"]
            if want not in present or spread <= DISAGREE_LIMIT or want == present[0]:
                raise ValueError(f"hsp_choices.csv: {cas} ({choices.at[cas, 'name']}): a choice needs a "
                                 f"{want} value that is not the first source's, and sources that disagree; "
                                 f"sources: {present}, spread {spread:.1f}")
            pick = present.index(want)
            notes[cas].append(f"kept {want} over {present[0]}: {choices.at[cas, 'reason']}")
        picks[cas] = pick
    for (key, cas), (osrc, other) in sorted(copied.items()):
        if _settled(tables, choices, key, cas, other):
            continue
        kept = key == present_of[cas][picks[cas]]
        cname, oname = identity(cas)[0] or cas, identity(other)[0] or other
        own_choice = cas in choices.index and choices.at[cas, "keep_source"] == key
        if not own_choice:      # a reviewed choice that keeps this row has settled it
            notes[cas].append(f"the {key} values{'' if kept else ' (not kept)'} equal those {osrc} files "
                              f"under {oname} ({other}): one of the two rows is probably filed under "
                              "the wrong compound")
        if len(present_of[other]) == 1:
            # a compound carried by one table only: its row is the likelier slip, and nothing
            # else would ever note it
            notes[other].append(f"the {osrc} values equal those {key} files under {cname} ({cas}), "
                                "whose sources disagree: one of the two rows is probably filed under "
                                "the wrong compound")
    rows = []
    for cas in cas_all:
        present = present_of[cas]
        vals, spread = values[cas]
        kept = vals[picks[cas]]
        rows.append({
            "cas": cas, "delta_d": kept[0], "delta_p": kept[1], "delta_h": kept[2],
            "hsp_source": present[picks[cas]], "hsp_sources_available": "|".join(present),
            "hsp_spread": round(spread, 3), "sources_disagree": spread > DISAGREE_LIMIT,
            "hsp_note": "; ".join(dict.fromkeys(notes[cas])),
        })
    return pd.DataFrame(rows).set_index("cas")


def _clean_synonyms(name: str, syns: list[str] | None, cas: str) -> str:
    seen, out = {name.lower()}, []
    for s in syns or []:
        s2 = s.strip().lower()
        if not s2 or s2 in seen or s2 == cas or "[" in s2 or len(s2) > 40:
            continue
        if sum(ch.isdigit() for ch in s2) > 0.5 * len(s2):
            continue
        seen.add(s2)
        out.append(s2)
        if len(out) >= 12:
            break
    return "|".join(out)


def _fit_antoine(psat_fn, tmin: float, tmax: float):
    """Fit log10(P/kPa) = A - B / (T/K + C) to a vapour-pressure curve on [tmin, tmax] K."""
    from scipy.optimize import curve_fit

    T = np.linspace(tmin, tmax, 25)
    P = []
    for t in T:
        try:
            p = psat_fn(t)
        except Exception:  # noqa: BLE001 - correlation out of range
            p = None
        P.append(np.nan if p is None else p / 1000.0)
    P = np.array(P, dtype=float)
    ok = np.isfinite(P) & (P > 0)
    if ok.sum() < 6:
        return None
    T, y = T[ok], np.log10(P[ok])

    def f(t, a, b, c):
        return a - b / (t + c)

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            popt, _ = curve_fit(f, T, y, p0=(7.0, 1500.0, -50.0), maxfev=20000)
    except Exception:  # noqa: BLE001
        return None
    resid = np.abs(f(T, *popt) - y).max()
    if not np.isfinite(resid) or resid > 0.02 or (T + popt[2]).min() <= 0:
        return None
    return float(popt[0]), float(popt[1]), float(popt[2]), float(T.min()), float(T.max())


def _num(x, scale=1.0, offset=0.0, digits=6):
    if x is None:
        return np.nan
    try:
        v = float(x)
    except (TypeError, ValueError):
        return np.nan
    if not math.isfinite(v):
        return np.nan
    return round(v * scale + offset, digits)


def _sig(v: float, n: int) -> float:
    """``v`` rounded to ``n`` significant figures (NaN stays NaN)."""
    if not math.isfinite(v) or v == 0:
        return v
    return round(v, n - 1 - int(math.floor(math.log10(abs(v)))))


def _by_cas(df: pd.DataFrame, path, column: str) -> np.ndarray:
    """``column`` of the hand-written table ``path`` (one row per CAS) for each row of ``df``
    (NaN where the table has none)."""
    tab = pd.read_csv(path, dtype={"cas": str}).drop_duplicates("cas").set_index("cas")
    return df["cas"].map(tab[column]).to_numpy(float)


DENSITIES_CSV = PARAMETERS_DIR / "densities.csv"


def merge_densities(df: pd.DataFrame) -> pd.DataFrame:
    """Replace an *estimated* molar volume (``molar_volume_estimated``) by the one from the density
    at 25 C in ``parameters/densities.csv`` (supplier and handbook values quoted from memory, for
    common solvents whose estimate was 1-10 % off). A data-based volume is never replaced; the
    expansion coefficient of the estimate is kept."""
    if not DENSITIES_CSV.exists() or df.empty:
        return df
    df = df.copy()
    rho = _by_cas(df, DENSITIES_CSV, "density_g_cm3")
    use = np.isfinite(rho) & df["molar_volume_estimated"].fillna(False).to_numpy(bool)
    df.loc[use, "density"] = np.round(rho[use], 4)
    df.loc[use, "molar_volume"] = np.round(df.loc[use, "molar_mass"].to_numpy(float) / rho[use], 3)
    df.loc[use, "molar_volume_estimated"] = False
    df.loc[use, "volume_method"] = "parameters/densities.csv (from memory)"
    return df


VISCOSITIES_CSV = PARAMETERS_DIR / "viscosities.csv"


def merge_viscosities(df: pd.DataFrame) -> pd.DataFrame:
    """Fill viscosities at 25 C from ``parameters/viscosities.csv`` (values quoted from memory of
    handbook tables, each with its source) where ``thermo`` has no data-based value: the liquid had
    none, or only Joback's estimate. A data-based value is never replaced."""
    if not VISCOSITIES_CSV.exists() or df.empty:
        return df
    df = df.copy()
    val = _by_cas(df, VISCOSITIES_CSV, "viscosity_mpa_s")
    est = df["viscosity_estimated"].fillna(False).to_numpy(bool)
    use = np.isfinite(val) & (~np.isfinite(df["viscosity_mpa_s"].to_numpy(float)) | est)
    df.loc[use, "viscosity_mpa_s"] = val[use]
    df.loc[use, "viscosity_estimated"] = False
    df.loc[use, "viscosity_method"] = "parameters/viscosities.csv (from memory)"
    return df


#: Boiling points (C) within this of each other, with the same InChIKey skeleton: the same
#: compound but for its stereochemistry (enantiomers, a racemate, a named and an unnamed isomer).
STEREO_BP_C = 2.0


def _without_chirality(smi) -> str | None:
    """Canonical SMILES with the tetrahedral centres left open (cis/trans kept), None if unreadable."""
    from rdkit import Chem

    m = Chem.MolFromSmiles(str(smi or ""))
    if m is None:
        return None
    for at in m.GetAtoms():
        at.SetChiralTag(Chem.ChiralType.CHI_UNSPECIFIED)
    return Chem.MolToSmiles(m)


def _same_but_chirality(a: str, b: str) -> bool:
    """True when two SMILES are one compound once tetrahedral centres are ignored: enantiomers,
    a racemate and its forms. Any cis/trans difference, or cis/trans given on one side only,
    keeps them apart (the library's dibutyl fumarate SMILES leaves it open beside the maleate)."""
    ca = _without_chirality(a)
    return ca is not None and ca == _without_chirality(b)


def merge_stereo_partners(df: pd.DataFrame) -> pd.DataFrame:
    """Give a liquid whose vapour pressure is only a corresponding-states estimate
    (:data:`VP_ESTIMATES`), or whose viscosity is Joback's estimate or missing, the data-based
    value of a library liquid that is the same compound but for its stereochemistry: the same
    first InChIKey block (connectivity), a boiling point within :data:`STEREO_BP_C`, and the
    same structure once tetrahedral centres are ignored (:func:`_same_but_chirality`: dibutyl
    maleate and fumarate are two compounds).
    Enantiomers have the same vapour pressure and viscosity, and a racemic liquid practically so
    (common practice). Racemic ethyl lactate had an estimate of 0.067 kPa where ethyl (S)-lactate's
    Landolt correlation gives 0.29, and the (S) form a Joback viscosity of 6.2 mPa s where the
    racemate's data give 2.4. The method column names the liquid the value comes from."""
    if df.empty or "inchikey" not in df.columns:
        return df
    df = df.copy()
    key = df["inchikey"].fillna("").astype(str).str[:14]
    bp = df["boiling_point_c"].to_numpy(float)
    vpm = df["vapour_pressure_method"].fillna("").astype(str)
    first = vpm.str.split(" ").str[0]
    has_vp = df["vapour_pressure_kpa"].notna().to_numpy()
    vp_est = first.isin(VP_ESTIMATES).to_numpy() & has_vp
    vp_data = ~first.isin(VP_ESTIMATES | {""}).to_numpy() & has_vp
    mu = df["viscosity_mpa_s"].to_numpy(float)
    mu_est = df["viscosity_estimated"].fillna(False).to_numpy(bool) | ~np.isfinite(mu)
    vp_cols = ["vapour_pressure_kpa", "antoine_a", "antoine_b", "antoine_c", "antoine_tmin_c", "antoine_tmax_c"]
    pos = np.arange(len(df))
    for k, idx in pd.Series(pos).groupby(key.to_numpy()):
        idx = idx.to_numpy()
        if len(idx) < 2 or not k:
            continue
        bare = {i: _without_chirality(df["smiles"].iat[i]) for i in idx}
        for i in idx:
            mates = [j for j in idx if j != i and abs(bp[i] - bp[j]) <= STEREO_BP_C
                     and bare[i] is not None and bare[i] == bare[j]]
            if not mates:
                continue
            name = lambda j: df["name"].iat[j]  # noqa: E731
            if vp_est[i]:
                j = next((j for j in mates if vp_data[j]), None)
                if j is not None:
                    for c in vp_cols:
                        df.iat[i, df.columns.get_loc(c)] = df.iat[j, df.columns.get_loc(c)]
                    df.iat[i, df.columns.get_loc("vapour_pressure_method")] = (
                        f"{vpm.iat[j].split(' ')[0]}, of {name(j)} (the same compound but for its "
                        f"stereochemistry; thermo's {vpm.iat[i].split(' ')[0]} is an estimate)")
            if mu_est[i]:
                j = next((j for j in mates if not mu_est[j]), None)
                if j is not None:
                    df.iat[i, df.columns.get_loc("viscosity_mpa_s")] = mu[j]
                    df.iat[i, df.columns.get_loc("viscosity_estimated")] = False
                    df.iat[i, df.columns.get_loc("viscosity_method")] = (
                        f"{df['viscosity_method'].iat[j]}, of {name(j)} (the same compound but for its "
                        "stereochemistry)")
    return df


def merge_flash_points(df: pd.DataFrame) -> pd.DataFrame:
    """Fill and check the flash points from ``chemicals`` with those of ``parameters/hazards.csv``.

    Where only the hazard table has a flash point it is used; where both have one and the hazard
    table's is lower by more than 1 C, the lower value is kept (a flash-point limit must not pass a
    liquid on the higher of two published values) and ``flash_point_source`` names both. A liquid
    the hazard table marks as not flammable gets no flash point (the filters then treat it as not
    flammable), and the source names the value ``chemicals`` gave."""
    from .hazards import hazard_statements

    table = hazard_statements().drop_duplicates("cas").set_index("cas")
    st = table["csv_flash_point_c"]
    df = df.copy()
    csv = df["cas"].map(st).to_numpy(float)
    nonflam = df["cas"].map(table["not_flammable"]).fillna(False).to_numpy(bool)
    lib = df["flash_point_c"].to_numpy(float)
    src = df["flash_point_source"].fillna("").astype(str).to_numpy(object)
    fill = ~np.isfinite(lib) & np.isfinite(csv)
    lower = np.isfinite(lib) & np.isfinite(csv) & (csv < lib - 1.0)
    new_src = src.copy()
    new_src[fill] = "parameters/hazards.csv (from memory; confirm with the safety data sheet)"
    for i in np.flatnonzero(lower):
        new_src[i] = (f"lower of parameters/hazards.csv {csv[i]:g} C (from memory) and {src[i] or 'chemicals'} "
                      f"{lib[i]:g} C")
    out = np.where(fill | lower, csv, lib)
    # marked not flammable there (tetrachloroethylene, trichloroethylene) but given a flash point
    # by chemicals: no flash point, and the source says both
    clash = nonflam & np.isfinite(lib)
    for i in np.flatnonzero(clash):
        new_src[i] = (f"not flammable per parameters/hazards.csv (from memory); {src[i] or 'chemicals'} lists "
                      f"{lib[i]:g} C - check the safety data sheet")
    out = np.where(clash, np.nan, out)
    df["flash_point_c"] = out
    df["flash_point_source"] = new_src
    return df


#: thermo liquid-volume methods that rest on measured data for the compound itself.
DATA_VOLUME_METHODS = {"HEOS_FIT", "DIPPR_PERRY_8E", "VDI_PPDS", "VDI_TABULAR", "COOLPROP",
                       "CRC_INORG_L", "CRC_INORG_L_CONST", "Fit 2023", "HTCOSTALDFIT", "MMSNM0FIT",
                       "RACKETTFIT"}


# Girolami, J. Chem. Educ. 71 (1994) 962, from memory: atomic volume units by periodic-table row
# (H 1; Li-F 2; Na-Cl 4; K-Br 5; Rb-I 7.5; Cs-Bi 9); V = 5 * sum cm3/mol; density M / V raised by
# 10 % for each ring, OH, NH (amine/amide N-H), amide, sulfoxide/sulfone and COOH, at most 30 %.
_GIROLAMI_UNITS = {1: 1.0, 2: 2.0, 3: 4.0, 4: 5.0, 5: 7.5, 6: 9.0}
_GIROLAMI_SMARTS = ["[OX2H]", "[NX3;H1,H2;!$(NC=O)]", "C(=O)[NX3]", "[SX3](=O)", "[SX4](=O)(=O)"]


def girolami_volume(smiles: str) -> float | None:
    """Liquid molar volume (cm3/mol) by Girolami's method (J. Chem. Educ. 71 (1994) 962).

    Used only as a plausibility check and fallback for corresponding-states estimates.
    """
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles) if smiles else None
    if mol is None:
        return None
    mol = Chem.AddHs(mol)
    pt = Chem.GetPeriodicTable()
    units = 0.0
    for a in mol.GetAtoms():
        z = a.GetAtomicNum()
        row = 1 if z <= 2 else 2 if z <= 10 else 3 if z <= 18 else 4 if z <= 36 else 5 if z <= 54 else 6
        units += _GIROLAMI_UNITS[row]
    mass = sum(pt.GetAtomicWeight(a.GetAtomicNum()) for a in mol.GetAtoms())
    n_corr = mol.GetRingInfo().NumRings()
    for sm in _GIROLAMI_SMARTS:
        n_corr += len(mol.GetSubstructMatches(Chem.MolFromSmarts(sm)))
    rho = mass / (5.0 * units) * min(1.0 + 0.1 * n_corr, 1.3)
    return mass / rho


def _volume(c):
    """Molar volume (m3/mol) at 25 C, expansion coefficient (1/K), method, estimated flag.

    Rule: thermo's default method when it rests on data for the compound. Otherwise the median
    of three estimates: COSTALD (Hankinson and Thomson, AIChE J. 25 (1979) 653), thermo's
    MMSNM0 (modified SNM0 corresponding-states method of Mchaweh, Moshfeghian et al.) and
    Girolami's structure-based method (:func:`girolami_volume`), reported under the method that
    gave the median (the expansion coefficient is left missing when that is Girolami's). With
    fewer than three, COSTALD, else MMSNM0, else Girolami. When the value taken is not within
    -20 % / +25 % of Girolami's, both corresponding-states estimates are off together (bad
    critical constants; methylhydrazine 0.51 g/cm3) and Girolami's value is used. Corresponding-states estimates fail
    when the compound's critical constants are themselves poor estimates, which is common for
    the polyfunctional liquids without data: on 232 library liquids with data-based volumes
    COSTALD alone has a median error of 2.0 %, MMSNM0 2.6 %, Girolami 3.9 % and the median
    of the three 2.0 %, but on twelve common oxygenated solvents without data (ethyl lactate,
    hexylene glycol, triethanolamine, ...; handbook densities from memory) COSTALD alone is off by
    a median 15 % and the median of the three by 3.9 %.
    """
    vl = c.VolumeLiquid
    method = vl.method
    estimated = method not in DATA_VOLUME_METHODS

    def at25(m):
        try:
            v = vl.calculate(T25, m)
            vp, vm = vl.calculate(T25 + 1.0, m), vl.calculate(T25 - 1.0, m)
        except Exception:  # noqa: BLE001
            return None
        if v is None or not math.isfinite(v) or v <= 0:
            return None
        ok = vp is not None and vm is not None and math.isfinite(vp) and math.isfinite(vm)
        return v, ((vp - vm) / (2.0 * v) if ok else None)

    if not estimated:
        got = at25(method)
        return (got[0], got[1], method, False) if got else (None, None, method or "", False)
    # no data: the median of two corresponding-states estimates and Girolami's structure-based one
    cands = [(m, *got) for m in ("HTCOSTALD", "MMSNM0") if m in vl.all_methods and (got := at25(m))]
    g = girolami_volume(c.smiles or "")
    if g is not None:
        cands.append(("GIROLAMI_1994", g * 1e-6, None))
    if not cands:
        got = at25(method) if method else None
        return (got[0], got[1], method, True) if got else (None, None, method or "", True)
    if len(cands) == 3:
        cands.sort(key=lambda t: t[1])
        m, v, alpha = cands[1]
    else:
        m, v, alpha = cands[0]
    if g is not None and not (0.8 <= v * 1e6 / g <= 1.25):
        # both corresponding-states estimates off together (bad critical constants): structure wins
        m, v, alpha = "GIROLAMI_1994", g * 1e-6, None
    return v, alpha, m, True


#: Correlations whose expansion coefficient stands in where the volume's own gives none (Girolami's
#: method, a constant-density table). Against the data-based correlations of 244 library liquids at
#: 25 C, COSTALD's is off by a median 3.7 % (90th percentile 23 %), Rackett's by 4.5 % (20 %);
#: MMSNM0's runs 11 % low (selector.build, checked when this rule was set).
EXPANSION_FALLBACK_METHODS = ("HTCOSTALD", "RACKETT")


def _expansion(c, alpha, volume_method):
    """(expansion coefficient in 1/K, the correlation it comes from): a data-based volume
    correlation's own when it has one (above 1e-6 1/K: constant-density tables report ~0), else
    the first of :data:`EXPANSION_FALLBACK_METHODS` that thermo can evaluate at 25 +- 1 C (for an
    estimated volume too: MMSNM0's coefficient runs low), else the estimate's own."""
    own = alpha is not None and math.isfinite(alpha) and alpha > 1e-6
    if own and volume_method in DATA_VOLUME_METHODS:
        return alpha, volume_method
    vl = c.VolumeLiquid
    for m in EXPANSION_FALLBACK_METHODS:
        if m not in vl.all_methods:
            continue
        try:
            v, vp, vm = (vl.calculate(T25 + d, m) for d in (0.0, 1.0, -1.0))
        except Exception:  # noqa: BLE001
            continue
        if all(x is not None and math.isfinite(x) and x > 0 for x in (v, vp, vm)):
            a = (vp - vm) / (2.0 * v)
            if a > 1e-6:
                return a, m
    return (alpha, volume_method) if own else (None, "")


#: thermo ViscosityLiquid methods that predict from structure or critical constants rather than
#: fit data for the compound.
ESTIMATED_VISCOSITY_METHODS = frozenset({"LETSOU_STIEL", "PRZEDZIECKI_SRIDHAR", "JOBACK"})


#: Plausible liquid viscosities at 25 C, Pa s (0.1 mPa s, below diethyl ether's 0.22, to 100 Pa s,
#: above castor oil's ~0.7 Pa s; common practice): a value outside is an artefact and is dropped.
VISCOSITY_RANGE_PA_S = (1e-4, 100.0)


#: Joback's viscosity estimate is kept only up to this molar mass (g/mol): the range in which it
#: was checked. Of the 194 library liquids with a data-based viscosity and a Joback estimate, 193
#: weigh <= 300 g/mol (median factor off 1.20, 90 % within a factor of 2); the one above,
#: 1,1,2,2-tetrabromoethane (346 g/mol), is off by a factor of 3.4. Joback's exponent grows with
#: every group, so large esters drift high: triolein 3,900 mPa s, tributyl citrate 340 mPa s,
#: where tens of mPa s are usual for such oils and plasticisers (from memory).
JOBACK_VISCOSITY_MAX_MOLAR_MASS = 300.0


def _viscosity(c):
    """Liquid viscosity (Pa s) at 25 C, method, estimated flag.

    Rule: thermo's default method when it rests on data for the compound; otherwise Joback's
    group-contribution estimate (Joback and Reid, Chem. Eng. Comm. 57 (1987) 233, as carried by
    thermo) for molecules up to ``JOBACK_VISCOSITY_MAX_MOLAR_MASS``; otherwise no value. The Letsou-Stiel corresponding-states estimate (AIChE J. 19
    (1973) 409) that thermo would pick there is not used - it is a high-temperature method: on the 183 library liquids that have a data-based correlation and both estimates it
    is off by a median factor of 1.82 at 25 C and low (median ratio 0.55; 54 % within a factor
    of 2), where Joback is off by a median factor of 1.20 (median ratio 0.96; 91 % within a
    factor of 2); ``tests/test_library.py`` re-measures this on 20-odd common liquids.
    """
    vl = c.ViscosityLiquid
    method = vl.method
    if method is None:
        return None, "", False

    def at25(m):
        # the method's own value at 25 C: Chemical.mul can return a value off by orders of
        # magnitude (mesitylene 8e5 mPa s) where the same method gives 0.75 mPa s
        try:
            v = vl.calculate(T25, m)
        except Exception:  # noqa: BLE001 - e.g. Joback groups missing for this structure
            return None
        ok = v is not None and math.isfinite(v) and VISCOSITY_RANGE_PA_S[0] <= v <= VISCOSITY_RANGE_PA_S[1]
        return v if ok else None

    if method not in ESTIMATED_VISCOSITY_METHODS:
        v = at25(method)
        return (v, method, False) if v is not None else (None, "", False)
    if "JOBACK" in vl.all_methods and (c.MW or math.inf) <= JOBACK_VISCOSITY_MAX_MOLAR_MASS:
        v = at25("JOBACK")
        if v is not None:
            return v, "JOBACK", True
    # no data and no Joback estimate: a corresponding-states value (Letsou-Stiel) is not kept - at
    # 25 C it is off by a median factor of 1.8 and biased low (docstring), i.e. not worth showing
    return None, "", False


#: Two boiling points (K) that differ by no more than this agree (the check below).
TB_AGREE_K = 10.0


def _vp_boiling_point(vp, method, tc=None):
    """Temperature (K) at which ``vp``'s correlation ``method`` gives 101.325 kPa, or None."""
    from scipy.optimize import brentq

    hi = 0.999 * tc if tc else 1000.0
    try:
        return float(brentq(lambda t: vp.calculate(t, method) - 101325.0, 120.0, hi))
    except Exception:  # noqa: BLE001 - no root in range, or the method fails there
        return None


def boiling_point_and_vapour_pressure(cas: str, c) -> tuple[float | None, str, str | None, str, str]:
    """Normal boiling point (K) and its source, the vapour-pressure method, that method as shown
    in the library (with the reason when it is not thermo's default), and a data note.

    ``chemicals`` lists several published boiling points per compound, and a few of the first
    ones are values at reduced pressure or plain errors (N-methylpyrrolidine 206 C where the other
    three sources give 79-81 C); thermo's vapour-pressure correlations can be off too
    (triacetin's Landolt correlation boils at 93 C). The check: every measured boiling point (not
    Joback's estimate) is scored by how many of the other measured values and of the boiling
    points implied by the vapour-pressure correlations (the one anchored on Tb itself excluded)
    lie within 10 C of it; the first-listed value is kept unless another scores higher and
    differs from it by more than 10 C. The
    vapour-pressure method is thermo's default if its boiling point agrees with the kept one
    within 10 C, else the first of thermo's other methods that does. Where none does, the
    default is kept and the note says the two disagree. Of the methods that agree, one fitted over
    a range that includes 25 C is preferred to one extrapolated down to it (thermo's default for
    benzyl alcohol, WAGNER_MCGARRY, is fitted from 123 C and gives twice the 25 C vapour pressure
    of its DIPPR, VDI and Poling correlations)."""
    import chemicals

    methods = [m for m in (chemicals.Tb_methods(cas) or []) if m != "JOBACK"]
    measured = []
    for m in methods:
        try:
            v = chemicals.Tb(cas, method=m)
        except Exception:  # noqa: BLE001
            v = None
        if v:
            measured.append((m, float(v)))
    vp = c.VaporPressure
    default = vp.method if vp is not None else None
    have = set(getattr(vp, "all_methods", []) or [])
    # thermo's own ranking: correlations of data first, corresponding-states estimates after
    ranked = [m for m in type(vp).ranked_methods if m in have] if vp is not None else []
    order = [m for m in ([default] + [m for m in ranked if m != default]) if m and m != "BOILING_CRITICAL"]
    implied = {m: _vp_boiling_point(vp, m, c.Tc) for m in order}
    pool = [v for _, v in measured] + [v for v in implied.values() if v]
    first = chemicals.Tb(cas)
    first_src = (chemicals.Tb_methods(cas) or [""])[0]
    if first is None:
        return None, "", default, default or "", ""

    def support(t):
        return sum(abs(x - t) <= TB_AGREE_K for x in pool)

    tb, src = float(first), first_src
    for m, v in measured:
        if support(v) > support(tb) and abs(v - float(first)) > TB_AGREE_K:
            tb, src = v, m
    note = ""
    if src != first_src:
        # a correction, not a doubt: it goes with the source, not into the data note
        src = f"{src} ({first_src}'s {first - 273.15:.1f} C disagrees with the other sources)"

    def p_at_tb(m):
        try:
            v = vp.calculate(tb, m)
        except Exception:  # noqa: BLE001
            return None
        return v if v is not None and math.isfinite(v) and v > 0 else None

    def agrees(m):
        # 101.325 kPa within a factor 1.5 at the boiling point, about +/- 10 C
        p = p_at_tb(m)
        return p is not None and 101325.0 / 1.5 <= p <= 101325.0 * 1.5

    def covering(kept):
        """A data-based method that, unlike ``kept``, is fitted over a range including 25 C and
        also boils at the boiling point (thermo's ranking first); None if ``kept`` covers 25 C
        or there is no such method. A correlation extrapolated 100 C below its range can be off
        twofold at 25 C (benzyl alcohol's WAGNER_MCGARRY from 123 C)."""
        lim = getattr(vp, "T_limits", {}) or {}
        if kept not in lim or lim[kept][0] <= T25 <= lim[kept][1]:
            return None
        return next((m for m in ranked if m != kept and m not in VP_ESTIMATES and m in lim
                     and lim[m][0] <= T25 <= lim[m][1] and agrees(m)), None)

    def from_c(m):
        return f"{(vp.T_limits[m][0] - 273.15):.0f} C"

    if default is None or p_at_tb(default) is None or agrees(default):
        # kept: it agrees, or it cannot be checked at the boiling point
        cov = covering(default) if default is not None and p_at_tb(default) is not None else None
        if cov:
            return tb, src, cov, f"{cov} (thermo's default {default} is fitted from {from_c(default)} up)", note
        return tb, src, default, default or "", note
    other = next((m for m in order if agrees(m)), None)
    if other is not None:
        other = covering(other) or other
    d = implied.get(default)
    if other is None:
        note = (f"vapour pressure ({default}) boils at {d - 273.15:.0f} C, not {tb - 273.15:.1f} C: "
                "boiling point or vapour pressure is wrong, treat both as uncertain" if d else
                f"vapour pressure ({default}) does not give 101 kPa at the boiling point "
                f"{tb - 273.15:.1f} C: boiling point or vapour pressure is wrong, treat both as uncertain")
        return tb, src, default, default, note
    # a correction, recorded with the method: thermo's default disagreed with the boiling point
    label = (f"{other} (thermo's default {default} boils at {d - 273.15:.0f} C)" if d else
             f"{other} (thermo's default {default} disagrees with the boiling point)")
    return tb, src, other, label, note


#: thermo's corresponding-states vapour-pressure estimates (no data of the compound behind them).
VP_ESTIMATES = frozenset({"AMBROSE_WALTON", "LEE_KESLER_PSAT", "EDALAT", "SANJARI", "BOILING_CRITICAL", "EOS"})


#: Isomers without an exposure limit of their own that take the limit set for the commercial
#: mixture (occupational limits are set for "xylene, all isomers"; common practice).
EXPOSURE_LIMIT_OF_MIXTURE = {
    "95-47-6": ("1330-20-7", "mixed xylenes"),
    "106-42-3": ("1330-20-7", "mixed xylenes"),
    "108-38-3": ("1330-20-7", "mixed xylenes"),
}


def liquid_record(cas: str) -> dict | None:
    """Property record of one compound at 25 C from ``thermo``, or None when not a liquid at 25 C."""
    import chemicals
    from thermo import Chemical

    tm, tb = chemicals.Tm(cas), chemicals.Tb(cas)
    if tm is None or tb is None or not (tm < T25 < tb):
        return None
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            c = Chemical(cas, T=T25, P=101325.0)
        except Exception:  # noqa: BLE001 - not in thermo's identifier database: cannot build a record
            return None
        tb_checked, tb_src, vp_method, vp_label, data_note = boiling_point_and_vapour_pressure(cas, c)
        if tb_checked is not None and not (tm < T25 < tb_checked):
            return None
        tb = tb_checked if tb_checked is not None else tb
        if vp_method and c.VaporPressure is not None and vp_method != c.VaporPressure.method:
            c.VaporPressure.method = vp_method
        psat = c.Psat  # thermo's value at 25 C with the checked method
        vm, alpha, vmethod, vest = _volume(c)
        alpha, amethod = _expansion(c, alpha, vmethod)
        mu, mu_method, mu_est = _viscosity(c)
        rec = {
            "cas": cas,
            "name": c.name,
            "smiles": c.smiles or "",
            "inchikey": c.InChI_Key or "",
            "formula": c.formula or "",
            "molar_mass": _num(c.MW, digits=4),
            "molar_volume": _num(vm, 1e6, digits=3),
            "density": _num(c.MW / (vm * 1e6), digits=4) if vm else np.nan,
            "molar_volume_estimated": bool(vest),
            "melting_point_c": _num(tm, offset=-273.15, digits=2),
            "boiling_point_c": _num(tb, offset=-273.15, digits=2),
            "flash_point_c": _num(c.Tflash, offset=-273.15, digits=1),
            "autoignition_c": _num(c.Tautoignition, offset=-273.15, digits=2),
            "vapour_pressure_kpa": _num(psat, 1e-3, digits=5),
            "hvap_kj_mol": _num(c.Hvapm, 1e-3, digits=4),
            "expansion_coeff": _num(alpha, digits=7) if alpha else np.nan,
            "expansion_method": amethod,
            "viscosity_mpa_s": _num(mu, 1e3, digits=5),
            "viscosity_estimated": bool(mu_est),
            "critical_temperature_c": _num(c.Tc, offset=-273.15, digits=2),
            "synonyms": _clean_synonyms(c.name, c.synonyms, cas),
            "melting_point_source": (chemicals.Tm_methods(cas) or [""])[0],
            "boiling_point_source": tb_src,
            "volume_method": vmethod or "",
            "vapour_pressure_method": (vp_label or c.VaporPressure.method or "") if psat is not None else "",
            "data_note": data_note,
            "viscosity_method": mu_method,
            "flash_point_source": (chemicals.safety.T_flash_methods(cas) or [""])[0]
            if c.Tflash is not None else "",
        }
        twa = chemicals.safety.TWA(cas)
        lim_cas, lim_note = cas, ""
        if not twa and cas in EXPOSURE_LIMIT_OF_MIXTURE:
            lim_cas = EXPOSURE_LIMIT_OF_MIXTURE[cas][0]
            lim_note = f" (limit for {EXPOSURE_LIMIT_OF_MIXTURE[cas][1]}, CAS {lim_cas})"
            twa = chemicals.safety.TWA(lim_cas)
        stel = chemicals.safety.STEL(lim_cas)
        rec["short_term_limit"] = _sig(_num(stel[0]), 3) if stel else np.nan
        rec["short_term_limit_unit"] = stel[1] if stel else ""
        if twa:
            rec["exposure_limit"] = _sig(_num(twa[0]), 3)  # converted limits carry spurious digits
            rec["exposure_limit_unit"] = twa[1]
            rec["exposure_limit_source"] = (chemicals.safety.TWA_methods(lim_cas) or [""])[0] + lim_note
        else:
            rec["exposure_limit"] = np.nan
            rec["exposure_limit_unit"] = ""
            rec["exposure_limit_source"] = ""
        ant = None
        if c.VaporPressure is not None and psat is not None:
            tmin = max(tm + 1.0, tb - 100.0, 200.0)
            tmax = tb + 10.0
            if c.Tc:
                tmax = min(tmax, 0.95 * c.Tc)
            if tmax > tmin + 20:
                ant = _fit_antoine(c.VaporPressure, tmin, tmax)
        if ant is None:
            rec.update(antoine_a=np.nan, antoine_b=np.nan, antoine_c=np.nan,
                       antoine_tmin_c=np.nan, antoine_tmax_c=np.nan)
        else:
            a, b, cc, t0, t1 = ant
            rec.update(antoine_a=round(a, 6), antoine_b=round(b, 4), antoine_c=round(cc, 4),
                       antoine_tmin_c=round(t0 - 273.15, 2), antoine_tmax_c=round(t1 - 273.15, 2))
    if not rec["name"]:
        return None
    return rec


NAMES_CSV = PARAMETERS_DIR / "names.csv"


def apply_names(df: pd.DataFrame) -> pd.DataFrame:
    """Replace the few names in ``chemicals`` that read badly (index-style "1-propanol, 2-chloro-",
    abbreviations, a German spelling) by the plain names in ``parameters/names.csv``; the old name
    stays a synonym, so it is still found."""
    if not NAMES_CSV.exists() or df.empty:
        return df
    fix = pd.read_csv(NAMES_CSV, dtype=str).set_index("cas")["name"]
    df = df.copy()
    hit = df["cas"].isin(fix.index).to_numpy()
    for i in np.flatnonzero(hit):
        old, new = str(df["name"].iloc[i]), fix[df["cas"].iloc[i]]
        if old == new:
            continue
        syn = [x for x in str(df["synonyms"].iloc[i] if pd.notna(df["synonyms"].iloc[i]) else "").split("|")
               if x and x.lower() != new.lower()]
        if old.lower() != new.lower() and old.lower() not in [x.lower() for x in syn]:
            syn.insert(0, old)
        df.iloc[i, df.columns.get_loc("name")] = new
        df.iloc[i, df.columns.get_loc("synonyms")] = "|".join(syn)
    low = df["name"].astype(str).str.lower()
    clash = low.duplicated(keep=False) & df["cas"].isin(fix.index).to_numpy()
    if clash.any():
        raise ValueError("parameters/names.csv gives a name another liquid already has: "
                         + ", ".join(sorted(set(df.loc[clash, "name"].astype(str)))))
    return df


def build(cas_subset: list[str] | None = None, processes: int = 2) -> pd.DataFrame:
    """Build the library table (all liquids at 25 C with HSP, or only ``cas_subset``)."""
    hsp = merged_hsp()
    cas_list = list(hsp.index) if cas_subset is None else [c for c in cas_subset if c in hsp.index]
    if processes > 1 and len(cas_list) > 50:
        from multiprocessing import Pool

        with Pool(processes) as pool:
            recs = pool.map(liquid_record, cas_list, chunksize=20)
    else:
        recs = [liquid_record(c) for c in cas_list]
    rows = []
    for rec in recs:
        if rec is None:
            continue
        h = hsp.loc[rec["cas"]]
        rec.update({k: h[k] for k in ("delta_d", "delta_p", "delta_h", "hsp_source",
                                      "hsp_sources_available", "hsp_spread", "sources_disagree",
                                      "hsp_note")})
        rows.append(rec)
    df = merge_stereo_partners(merge_densities(merge_viscosities(merge_flash_points(apply_names(pd.DataFrame(rows))))))
    # Names must be unique for look-up: disambiguate rare clashes with the CAS number.
    dup = df["name"].str.lower().duplicated(keep=False)
    df.loc[dup, "name"] = df.loc[dup, "name"] + " (" + df.loc[dup, "cas"] + ")"
    from .cautions import reactive_reasons

    df["reactive_reason"] = reactive_reasons(df.drop(columns=["reactive_reason", "origin"], errors="ignore"))
    df = df[COLUMNS].sort_values("name", key=lambda s: s.str.lower()).reset_index(drop=True)
    return df


def write_atomic(df: pd.DataFrame, path: Path) -> None:
    """Write a CSV atomically: temp file in the same folder, then rename."""
    path = Path(path)
    tmp = path.with_suffix(path.suffix + ".tmp")
    df.to_csv(tmp, index=False, lineterminator="\n")
    os.replace(tmp, path)


def compare(old: pd.DataFrame, new: pd.DataFrame, rtol: float = 1e-4) -> list[str]:
    """Differences between two library tables (rows keyed by CAS), as readable lines."""
    out = []
    o, n = old.set_index("cas"), new.set_index("cas")
    for cas in sorted(set(o.index) - set(n.index)):
        out.append(f"{cas}: only in the committed table")
    for cas in sorted(set(n.index) - set(o.index)):
        out.append(f"{cas}: only in the fresh build")
    common = sorted(set(o.index) & set(n.index))
    for col in [c for c in COLUMNS if c != "cas" and c in o.columns and c in n.columns]:
        a, b = o.loc[common, col], n.loc[common, col]
        if pd.api.types.is_numeric_dtype(a) and pd.api.types.is_numeric_dtype(b):
            av, bv = a.to_numpy(float), b.to_numpy(float)
            atol = 1e-3 if col == "antoine_c" else 1e-9  # C is ~0 K for many fits: curve_fit noise
            bad = ~(np.isclose(av, bv, rtol=rtol, atol=atol) | (np.isnan(av) & np.isnan(bv)))
        else:
            bad = (a.fillna("").astype(str).str.lower() != b.fillna("").astype(str).str.lower()).to_numpy()
        for cas in np.asarray(common)[bad]:
            out.append(f"{cas} {col}: committed {o.at[cas, col]!r}, fresh {n.at[cas, col]!r}")
    return out


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description="Rebuild parameters/liquids.csv from chemicals/thermo.")
    p.add_argument("--check", action="store_true", help="compare with the committed file, do not write")
    p.add_argument("--out", type=Path, default=LIBRARY_CSV)
    a = p.parse_args(argv)
    df = build()
    if a.check:
        old = pd.read_csv(LIBRARY_CSV, keep_default_na=False, na_values=[""], dtype={"cas": str})
        diffs = compare(old, df)
        print(f"built {len(df)} liquids; committed {len(old)}; {len(diffs)} difference(s)")
        for d in diffs[:50]:
            print("  " + d)
        return 0 if not diffs else 1
    write_atomic(df, a.out)
    print(f"wrote {len(df)} liquids to {a.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
