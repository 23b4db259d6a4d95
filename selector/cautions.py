"""Liquids that are reagents, not solvents: reactive, explosive or very toxic at low exposure.

The library holds every compound of the published HSP tables that is liquid at 25 C, and that
includes acid chlorides, isocyanates, aziridines, nitrate esters, hydrazines and similar
reagents. Their HSP are real, but nobody should be handed one as a thinner or a substitute.
:func:`reactive_reason` gives a short reason for such a liquid ("" for an ordinary solvent);
:func:`selector.filters.filter_mask` leaves them out of every candidate list unless
``include_reactive=True`` is given (``--include-reactive`` on the command line). They can still
be looked up, shown, used as a target and checked for miscibility.

What counts (common practice: reagent classes that a solvent selection guide would not list,
because they react with water, air, skin or the solute, are explosive, or are alkylating
agents):

* functional groups, by RDKit SMARTS (:data:`REACTIVE_GROUPS`);
* inorganic liquids (no carbon) other than water (bromine, nitric acid, hydrazine, hydrogen
  peroxide, thionyl chloride, ...);
* a "fatal" acute-toxicity statement (H300, H310, H330) in ``parameters/hazards.csv``;
* an occupational exposure limit (8-h TWA, from the library's ``chemicals`` value) below
  1 ppm for a liquid volatile enough for the limit to matter (vapour pressure >= 0.01 kPa at
  25 C): benzene, 2-methoxyethanol, chloropicrin and the like. (Low-volatility
  liquids whose limit is set in mg/m3 - phthalates - convert to small ppm values without
  being a vapour hazard, hence the volatility condition.)

Pairs that react with each other are screened too (:func:`reactive_pair_matrix`,
:data:`PAIR_RULES`): an acid with an amine or pyridine, an amine with a nitroalkane, a primary
or secondary amine with an aldehyde or ketone, or with an ester, lactone or carbonate, an aromatic
amine with an aldehyde, an amine with a polyhalogenated alkane or an alkyl bromide, a primary or
secondary amine with carbon disulfide, an isocyanate with an amine, water or an alcohol, an
epoxide with an amine or an acid, an acid with furfuryl alcohol or an enol ether. Blends and substitutes never pair them unless
``include_reactive=True``, and then ``hazard_notes`` says "REACTIVE PAIR".

This is a screen, not a hazard assessment: a liquid without a reason can still be dangerous,
and a pair it does not flag can still react. Read the supplier's safety data sheet before any use.

>>> reactive_reason("CC(=O)Cl")
'acyl halide (reacts violently with water, corrosive)'
>>> reactive_reason("CCOC(C)=O")
''
>>> reactive_reason("c1ccccc1", exposure_limit_ppm=0.5, vapour_pressure_kpa=12.7)
'exposure limit 0.5 ppm (very toxic at low exposure)'
"""
from __future__ import annotations

import functools
import hashlib
import math

import numpy as np
import pandas as pd

from .hazards import STATEMENT_FLAGS

#: Reagent groups: (name, RDKit SMARTS, why). Common practice (see module docstring).
REACTIVE_GROUPS = (
    ("isocyanate", "[NX2]=C=O", "sensitiser, reacts with water"),
    ("isothiocyanate", "[NX2]=C=S", "lachrymator, sensitiser"),
    ("acyl halide", "[CX3](=O)[F,Cl,Br,I]", "reacts violently with water, corrosive"),
    ("sulfur oxyhalide", "[SX3,SX4](=O)[F,Cl,Br,I]", "reacts violently with water, corrosive"),
    ("P, Si or B halide", "[P,Si,B][F,Cl,Br,I]", "reacts violently with water, corrosive"),
    ("anhydride", "[CX3](=O)O[CX3](=O)", "acylating agent, reacts with water and alcohols"),
    ("aziridine", "C1CN1", "alkylating agent, carcinogen"),
    ("epoxide", "C1OC1", "alkylating agent"),
    ("dialkyl sulfate", "[#6]OS(=O)(=O)O[#6]", "alkylating agent, very toxic"),
    ("alpha-halo ether", "[Cl,Br,I][CX4][OX2][#6]", "alkylating agent, carcinogen"),
    ("propargyl halide", "[F,Cl,Br,I][CX4]C#C", "shock-sensitive, alkylating"),
    ("haloalkyne", "[Cl,Br,I]C#C", "explosive"),
    ("nitrate or nitrite ester", "[#6]O[$([N+](=O)[O-]),$(N=O)]", "explosive"),
    ("azide or diazo", "[#6,#7]=[N+]=[N-]", "explosive"),
    ("peroxide", "[OX2][OX2]", "explosive, oxidiser"),
    ("hydrazine", "[NX3;!a][NX3;!a]", "very toxic, carcinogen, reducing agent"),
    ("isonitrile", "[C-]#[N+]", "very toxic"),
    ("acyl cyanide or cyanohydrin", "[$(C(=O)C#N),$(N#C[CX4][OX2H])]", "releases hydrogen cyanide"),
    ("thiol", "[SX2H]", "stench, toxic"),
    ("hydrogen cyanide", "[CH1]#N", "very toxic"),
    ("unsaturated aldehyde", "[C;!$(C-a)]=[C;!$(C-a)][CH1]=O", "lachrymator, very toxic"),
    # alpha-halo ketones and aldehydes (chloroacetone, chloroacetaldehyde) alkylate like benzyl
    # halides and are lachrymators (common practice: chloroacetone was a tear gas)
    ("alpha-halo carbonyl", "[Cl,Br,I][CX4][CX3]=O", "alkylating agent, lachrymator"),
    # Other aliphatic aldehydes (butanal, hexanal, 4-pentenal, chloral): they oxidise in air to
    # acids and peracids, condense with amines and with themselves, and sensitise; they are sold
    # as reagents and flavours, not as solvents (common practice). Aldehydes on an aromatic ring
    # or a conjugated C=C stay in: furfural is an industrial extraction solvent.
    ("aliphatic aldehyde", "[CX3H1](=O)[CX4]",
     "oxidises in air, condenses with amines; a reagent, not a solvent"),
    # benzal chloride and benzotrichloride (PhCHCl2, PhCCl3) are benzylic halides too: they
    # hydrolyse to HCl and benzotrichloride is a carcinogen (EU CLP, from memory); CF3 groups
    # (benzotrifluoride, a solvent) do not match
    ("allylic or benzylic halide", "[Cl,Br,I][CX4][$(C=C),$(c)]",
     "alkylating agent, lachrymator"),
    # alkyl hypochlorites (ethyl hypochlorite) decompose explosively (common practice)
    ("hypohalite", "[#6]O[Cl,Br,I]", "explosive, oxidiser"),
    ("alkyl iodide", "[CX4;!$(C(I)(I))]I", "alkylating agent"),
    ("vinylpyridine", "[CH2]=[CH1][$(c1ncccc1),$(c1cnccc1),$(c1ccncc1)]", "polymerises, toxic, sensitiser"),
    # Organosulfur and halo-ethyl compounds near ester/ether HSP (common practice unless noted:
    # none of them is in a solvent selection guide).
    # 2-chloroethyl ethyl sulfide is the "half-mustard": the 2-haloethyl sulfide group closes to a
    # sulfonium ion that alkylates skin and DNA (the chemistry of sulfur mustard).
    ("2-haloethyl sulfide", "[Cl,Br,I][CX4][CX4][SX2]", "mustard-type alkylating agent, vesicant"),
    # nitrogen mustards: the 2-haloethyl amine closes to an aziridinium ion (amides excluded)
    ("2-haloethyl amine", "[Cl,Br,I][CX4][CX4][NX3;!$(N-[C,S,P]=[O,S,N]);!$(N-[N,O])]",
     "mustard-type alkylating agent, vesicant"),
    # 2-chloroethanol is fatal in contact with skin, 1,3-dichloro-2-propanol a carcinogen (EU CLP,
    # from memory); halohydrins are epoxide precursors, made to react
    ("halohydrin", "[Cl,Br,I][CX4][CX4][OX2H]", "alkylating, forms epoxides, toxic"),
    ("thiirane", "C1CS1", "alkylating agent, polymerises"),
    # vinyl sulfides are monomers and synthesis intermediates with a stench (divinyl sulfide,
    # methyl vinyl sulfide); thiophene (aromatic) does not match
    ("vinyl sulfide", "[SX2][CX3]=[CX3]", "monomer and reagent, stench"),
    # organic thiocyanates can release cyanide in the body (from memory: methyl thiocyanate is
    # classed toxic)
    ("organic thiocyanate", "[#6]SC#N", "toxic, may release cyanide"),
    ("disulfide", "[#6][SX2][SX2][#6]", "stench, toxic"),
    # Monomers made to polymerise, and other unstable reagents (common practice: sold inhibited,
    # stored cold, never used as a thinner; acrylonitrile is a carcinogen, acrylic acid corrosive;
    # EU CLP, from memory). The heavier acrylate esters and vinyl ethers are left in:
    # radiation-curing inks and coatings use them as reactive diluents, chosen like solvents.
    ("cyanoacrylate", "[CH2]=C(C#N)C(=O)O", "instant-adhesive monomer: polymerises on moisture, bonds skin"),
    ("acrylic nitrile", "[CH2]=[CX3]C#N", "monomer: polymerises, toxic; acrylonitrile is a carcinogen"),
    ("acrylic acid", "[CH2]=[CX3]C(=O)[OX2H]", "monomer: may polymerise violently, corrosive"),
    ("vinyl ester", "[CH2]=[CH1]OC(=O)", "monomer: polymerises"),
    # the volatile C1-C4 alkyl acrylates and methacrylates (methyl methacrylate, ethyl and butyl
    # acrylate) are monomers and skin sensitisers with a strong smell, not reactive diluents
    # (common practice; H317 in EU CLP, from memory); the heavier ones stay in
    ("volatile acrylic ester",
     "[CH2]=[CX3;$([CH1]),$(C[CH3])]C(=O)O[$([CH3]),$([CH2][CH3]),$([CH2][CH2][CH3]),"
     "$([CH2][CH2][CH2][CH3]),$([CH1]([CH3])[CH3]),$([CH2][CH1]([CH3])[CH3]),"
     "$([CH1]([CH3])[CH2][CH3]),$([CX4]([CH3])([CH3])[CH3])]",
     "monomer: polymerises, skin sensitiser; sold inhibited, not a thinner"),
    ("vinyl ketone", "[CH2]=[CX3]C(=O)[#6]", "monomer: very toxic, lachrymator (methyl vinyl ketone)"),
    ("halodiene", "[$([CH2]=C([Cl,Br])C=C),$([Cl,Br,I][CX3]=[CX3][CX3]=[CX3])]",
     "monomer: polymerises; chloroprene is a carcinogen"),
    # CH2=CX-: vinyl iodide, vinylidene chloride and bromide, 2-bromopropene, 2-chloroacrylates
    # (common practice: monomers and reagents, sold inhibited). 1,2-dichloroethylene, tri- and
    # tetrachloroethylene, which are solvents, carry no CH2= and stay.
    ("vinyl halide", "[CH2]=[CX3][Cl,Br,I]", "monomer and reagent: polymerises (vinylidene chloride also "
     "forms explosive peroxides)"),
    ("ketene or beta-lactone", "[$([CX3]=[CX2]=O),$(O=C1CCO1),$(O=C1C(=C)CO1),$(C=C1CC(=O)O1)]",
     "reacts violently, acylating agent; beta-propiolactone is a carcinogen"),
    ("primary enamine", "[NX3;H2][CX3]=[CX3]", "unstable, tautomerises to an imine; not a bench liquid"),
    # Found by a numbers review among the top blends for a nitrocellulose sphere, unflagged.
    # Acetylenic compounds (propargyl alcohol, phenylacetylene, cyanoacetylene, dicyanoacetylene)
    # are energetic and terminal alkynes form explosive copper and silver acetylides (common
    # practice); no solvent carries a C#C bond.
    ("alkyne", "[CX2]#[CX2]", "acetylenic: energetic; terminal alkynes form explosive metal acetylides"),
    # nitroalkenes (nitroethylene) polymerise violently and are lachrymators (from memory)
    ("nitroalkene", "[CX3]=[CX3][$([N+](=O)[O-]),$(N(=O)=O)]", "energetic, polymerises, lachrymator"),
    # conjugated nitriles beyond the acrylic ones (crotononitrile): toxic like acrylonitrile
    # (from memory)
    ("unsaturated nitrile", "[CX3]=[CX3]C#N", "toxic and polymerises, like acrylonitrile"),
    # 1,2-dicarbonyls with an aldehyde (methylglyoxal, glyoxal): reactive, sensitising (from memory)
    ("alpha-oxo aldehyde", "[CX3H1](=O)[CX3]=O", "reactive, sensitiser, mutagenic"),
    # ortho-cresyl phosphates cause delayed nerve damage (tri-o-cresyl phosphate: the "ginger jake"
    # paralysis; from memory)
    ("ortho-cresyl phosphate", "P(=O)Oc1ccccc1[CH3]", "neurotoxic, delayed nerve damage"),
)

#: GHS statements that make a liquid a reagent wherever ``parameters/hazards.csv`` lists them:
#: fatal if swallowed, in contact with skin or inhaled (acute toxicity categories 1-2).
FATAL_STATEMENTS = dict(STATEMENT_FLAGS)["fatal on exposure"]
FATAL_REASON = f"fatal on exposure ({'/'.join(FATAL_STATEMENTS)})"

#: Exposure limits (ppm, 8-h TWA) below this mark a volatile liquid as very toxic.
EXPOSURE_LIMIT_PPM = 1.0
#: ... provided its vapour pressure at 25 C (kPa) is at least this.
VOLATILE_KPA = 0.01


@functools.lru_cache(maxsize=1)
def _patterns():
    from rdkit import Chem

    return [(name, Chem.MolFromSmarts(sma), why) for name, sma, why in REACTIVE_GROUPS]


@functools.lru_cache(maxsize=8192)
def _structure_reason(smiles: str) -> str:
    if not smiles:
        return ""
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        return ""
    symbols = {a.GetSymbol() for a in mol.GetAtoms()}
    if "C" not in symbols:
        if symbols <= {"O", "H"} and mol.GetNumAtoms() == 1:
            return ""  # water
        return "inorganic reagent"
    for name, patt, why in _patterns():
        if mol.HasSubstructMatch(patt):
            return f"{name} ({why})"
    nitro = Chem.MolFromSmarts("[N+](=O)[O-]")
    if len(mol.GetSubstructMatches(nitro)) >= 2:
        return "polynitro compound (explosive)"
    return ""


def reactive_reason(smiles: str, exposure_limit_ppm: float = math.nan,
                    vapour_pressure_kpa: float = math.nan) -> str:
    """Why a liquid is a reagent rather than a solvent ("" if no reason is known).

    ``smiles``: the structure; ``exposure_limit_ppm``: 8-h TWA in ppm (NaN if unknown);
    ``vapour_pressure_kpa``: at 25 C (NaN if unknown; then the exposure rule applies).
    """
    row = pd.DataFrame({"smiles": [str(smiles or "")], "exposure_limit": [exposure_limit_ppm],
                        "exposure_limit_unit": ["ppm"], "vapour_pressure_kpa": [vapour_pressure_kpa]})
    return str(reactive_reasons(row)[0])


_STRUCT_CACHE: dict = {}


def reactive_reasons(library: pd.DataFrame) -> np.ndarray:
    """:func:`reactive_reason` for every row of ``library`` (object array of str, "" = none).

    Rows of the bundled library carry theirs in the ``reactive_reason`` column (written by
    :mod:`selector.build`); the others (the user's liquids, estimated molecules) are worked out
    here: the structural part once per distinct set of SMILES (found again by a vectorised hash
    of the SMILES), the exposure rule vectorised."""
    n = len(library)
    out = np.full(n, "", dtype=object)
    todo = np.ones(n, dtype=bool)
    if "reactive_reason" in library.columns and "origin" in library.columns:
        done = (library["origin"].astype(str) == "library").to_numpy()
        out[done] = library["reactive_reason"].astype("string").fillna("").astype(str).to_numpy(object)[done]
        todo = ~done
    if todo.any():
        out[todo] = _computed(library.loc[todo])
    fatal = _fatal(library) & (out == "")
    out[fatal] = FATAL_REASON
    return out


def _computed(sub: pd.DataFrame) -> np.ndarray:
    """Structural and exposure reasons for rows without a precomputed one."""
    m = len(sub)
    smi = sub["smiles"].fillna("").astype(str) if "smiles" in sub else pd.Series([""] * m, index=sub.index)
    key = hashlib.sha1(pd.util.hash_pandas_object(smi, index=False).to_numpy().tobytes()).hexdigest()
    struct = _STRUCT_CACHE.get(key)
    if struct is None:
        struct = np.array([_structure_reason(x) for x in smi], dtype=object)
        if len(_STRUCT_CACHE) > 16:
            _STRUCT_CACHE.clear()
        _STRUCT_CACHE[key] = struct
    el = _exposure_ppm(sub)
    vp = sub["vapour_pressure_kpa"].to_numpy(float) if "vapour_pressure_kpa" in sub else np.full(m, np.nan)
    with np.errstate(invalid="ignore"):
        toxic = np.isfinite(el) & (el < EXPOSURE_LIMIT_PPM) & ~(vp < VOLATILE_KPA)
    res = struct.copy()
    for i in np.flatnonzero(toxic):   # the few flagged rows only; a structural reason keeps the limit too
        limit = f"exposure limit {el[i]:g} ppm (very toxic at low exposure)"
        res[i] = f"{res[i]}; {limit}" if res[i] else limit
    return res


def row_reason(row) -> str:
    """:func:`reactive_reasons` for one library row (a Series or dict), without building a frame
    for rows of the bundled library."""
    get = row.get
    cas = str(get("cas", "") or "")
    if str(get("origin", "")) == "library":
        why = get("reactive_reason", "")
        why = "" if why is None or (isinstance(why, float) and math.isnan(why)) else str(why)
    else:
        unit = str(get("exposure_limit_unit", "") or "").strip().lower()
        el = get("exposure_limit", math.nan) if unit == "ppm" else math.nan
        why = reactive_reason(get("smiles", "") or "", el, get("vapour_pressure_kpa", math.nan))
    if not why and cas and cas in _fatal_cas():
        why = FATAL_REASON
    return why


@functools.lru_cache(maxsize=1)
def _fatal_cas() -> pd.Index:
    from .hazards import _statement_table

    st = _statement_table()
    hit = st["statements"].map(lambda t: any(c[:4] in FATAL_STATEMENTS for c in t))
    return pd.Index(st.loc[hit, "cas"].astype(str).unique())


def _fatal(library: pd.DataFrame) -> np.ndarray:
    if "cas" not in library.columns:
        return np.zeros(len(library), dtype=bool)
    return library["cas"].astype(str).isin(_fatal_cas()).to_numpy()


def _exposure_ppm(library: pd.DataFrame) -> np.ndarray:
    n = len(library)
    if "exposure_limit" not in library:
        return np.full(n, np.nan)
    el = pd.to_numeric(library["exposure_limit"], errors="coerce").to_numpy(float)
    if "exposure_limit_unit" in library:
        ppm = library["exposure_limit_unit"].fillna("").astype(str).str.strip().str.lower().to_numpy() == "ppm"
        el = np.where(ppm, el, np.nan)
    return el


@functools.lru_cache(maxsize=1)
def _not_flammable_cas() -> pd.Index:
    from .hazards import _statement_table

    st = _statement_table()
    return pd.Index(st.loc[st["not_flammable"], "cas"].astype(str).unique())


def not_flammable(library: pd.DataFrame) -> np.ndarray:
    """True where the liquid has no flash point in the library and ``parameters/hazards.csv``
    marks it as not flammable (water, dichloromethane, chloroform, carbon tetrachloride, ...;
    from memory there, to be confirmed with the safety data sheet). Matched by CAS number."""
    if "cas" not in library.columns:
        return np.zeros(len(library), dtype=bool)
    nf = library["cas"].astype(str).isin(_not_flammable_cas()).to_numpy()
    fp = library["flash_point_c"].to_numpy(float) if "flash_point_c" in library else np.full(len(library), np.nan)
    return nf & ~np.isfinite(fp)


_TRUE_TEXT = frozenset({"true", "t", "yes", "y", "1", "1.0"})


def _flag_array(col: pd.Series) -> np.ndarray:
    """A boolean column as a numpy bool array, also when it holds text (a table read back from
    CSV: "True"/"False", "yes"/"no", "1"/"0", any case): missing or unrecognised cells are False
    (not known to be non-flammable)."""
    if pd.api.types.is_bool_dtype(col):
        return col.fillna(False).to_numpy(bool)
    if pd.api.types.is_numeric_dtype(col):
        v = pd.to_numeric(col, errors="coerce").to_numpy(float)
        return np.isfinite(v) & (v != 0)
    text = col.astype(str).str.strip().str.lower()
    return (text.isin(_TRUE_TEXT) & col.notna()).to_numpy(bool)


#: Texts of :func:`flash_point_text` for a liquid that does not burn and for a missing value.
NOT_FLAMMABLE_TEXT = "not flammable"
NO_FLASH_DATA_TEXT = "no data"


def flash_point_text(frame: pd.DataFrame, column: str = "flash_point_c", fmt: str = "{:.1f}") -> pd.Series:
    """``frame[column]`` (flash points in C) as display text, same index: the value formatted with
    ``fmt``, ``"not flammable"`` where the liquid is known not to burn, ``"no data"`` where the
    value is missing. A blank flash point means either, so tables must not print both the same
    way (tetrachloroethylene does not burn; divinyl sulfide has no data and is flammable).

    Known not to burn: the rows a boolean ``not_flammable`` column of ``frame`` marks (blend and
    substitute tables: every component non-flammable), else, for ``flash_point_c``,
    :func:`not_flammable` (library rows matched by CAS).

    >>> import pandas as pd
    >>> flash_point_text(pd.DataFrame({"cas": ["127-18-4", "627-51-0", "64-17-5"],
    ...                                "flash_point_c": [None, None, 13.0]})).tolist()
    ['not flammable', 'no data', '13.0']
    """
    v = pd.to_numeric(frame[column], errors="coerce").to_numpy(float)
    if "not_flammable" in frame.columns:
        nf = _flag_array(frame["not_flammable"])
    elif column == "flash_point_c":
        nf = not_flammable(frame)
    else:
        nf = np.zeros(len(v), dtype=bool)
    known = np.isfinite(v)
    out = np.where(nf & ~known, NOT_FLAMMABLE_TEXT, NO_FLASH_DATA_TEXT).astype(object)
    out[known] = [fmt.format(x) for x in v[known]]   # display only: the rows shown
    if column == "lowest_flash_point_c" and "lowest_known_flash_point_c" in frame.columns:
        # a blend with some flash points unknown: its flash point is at most the lowest known one
        k = pd.to_numeric(frame["lowest_known_flash_point_c"], errors="coerce").to_numpy(float)
        part = ~known & np.isfinite(k)
        out[part] = [f"at most {fmt.format(x)} (part no data)" for x in k[part]]
    return pd.Series(out, index=frame.index, name=column, dtype=object)


#: A use temperature above 25 C that comes within this many degrees (C) of a boiling point gets a note.
NEAR_BOILING_C = 10.0


def heated_notes(rows: pd.DataFrame, temperature: float, flash_column: str = "flash_point_c",
                 boiling_column: str = "boiling_point_c") -> np.ndarray:
    """``rows["hazard_notes"]`` with the cautions of heating put first, for a use temperature T
    above 25 C (a blend's columns: ``lowest_flash_point_c`` and ``bp_low_c``, its first component
    to boil):

    * "HEATED ABOVE ITS FLASH POINT (x C) at T C" where heating takes T past a flash point above
      25 C: the vapour over the liquid can burn (common practice: the flash point is the lowest
      temperature at which it does). Liquids that flash at or below 25 C get "ABOVE ITS FLASH
      POINT (x C) at T C, as at room temperature": their hazard statements, where the library has
      them, say flammable, but not that the use temperature is past the point;
    * "NEAR ITS BOILING POINT (x C) at T C" where T is within :data:`NEAR_BOILING_C` of the
      boiling point (or past it, for a blend's lowest component): it evaporates fast, and a closed
      vessel builds up pressure (common practice).
    """
    notes = rows["hazard_notes"].fillna("").astype(str).to_numpy(object)
    t = float(temperature)
    if t <= 25.0:
        return notes

    def col(c):
        return pd.to_numeric(rows.get(c, pd.Series(np.nan, index=rows.index)), errors="coerce").to_numpy(float)

    from .report import round_half_away

    fp, bp = col(flash_column), col(boiling_column)
    lead = np.full(len(notes), "", dtype=object)
    with np.errstate(invalid="ignore"):
        hot = np.isfinite(fp) & (fp <= t)
        boil = np.isfinite(bp) & (bp - t <= NEAR_BOILING_C)
    for k in np.flatnonzero(hot | boil):   # the few rows that carry a note
        parts = []
        if hot[k]:
            # heating is what takes it past its flash point, or it is past it at room temperature too
            lead_in = "HEATED ABOVE" if fp[k] > 25.0 else "ABOVE"
            parts.append(f"{lead_in} ITS FLASH POINT ({float(round_half_away(fp[k])):.0f} C) at {t:g} C"
                         + ("" if fp[k] > 25.0 else ", as at room temperature")
                         + ": flammable vapour over the liquid")
        if boil[k]:
            parts.append(f"NEAR ITS BOILING POINT ({float(round_half_away(bp[k])):.0f} C) at {t:g} C: fast "
                         "evaporation, pressure in a closed vessel")
        lead[k] = "; ".join(parts)
    has = lead != ""
    notes[has] = np.where(notes[has] != "", lead[has] + "; " + notes[has], lead[has])
    return notes


#: flash-point columns that tables show as text (:func:`with_flash_texts`)
FLASH_COLUMNS = ("flash_point_c", "lowest_flash_point_c")


def with_flash_texts(df: pd.DataFrame, fmt: str = "{:.1f}") -> pd.DataFrame:
    """``df`` with its numeric :data:`FLASH_COLUMNS` as :func:`flash_point_text` (the value,
    "not flammable" or "no data"), for display in any front end; ``df`` itself if it has none."""
    cols = [c for c in FLASH_COLUMNS if c in df.columns and df[c].dtype.kind in "fiu"]
    if not cols:
        return df
    out = df.copy()
    for c in cols:
        out[c] = flash_point_text(df, c, fmt=fmt)
    return out

# ---------------------------------------------------------------- pairs that react with each other

#: Groups for the pair screen: (class, RDKit SMARTS). Our own patterns.
PAIR_CLASSES = (
    ("acid", "[CX3](=O)[OX2H1]"),
    ("base", "[$([NX3;!$(N-[C,S,P]=[O,S,N]);!$(N-a);!$(N-[N,O]);!$([N+]);!$(N#*);!$(N=*)]),"
             "$([nX2;r6;!$(n(:a):n)]),$([nX2;r5]:c:[nX3;r5])]"),
    ("primary amine", "[NX3;H2;!$(N-[C,S,P]=[O,S,N]);!$(N-a)][CX4]"),
    ("secondary amine", "[NX3;H1;!$(N-[C,S,P]=[O,S,N]);!$(N-a);!$(N-[N,O])]([CX4])[CX4]"),
    ("carbonyl", "[CX3;$([CH1](=O)[#6,#1]),$(C(=O)([#6])[#6])]=O"),
    ("nitroalkane", "[CX4][$([N+](=O)[O-]),$(N(=O)=O)]"),
    # carboxylic esters, lactones, organic carbonates and anhydrides (not acids)
    ("ester", "[CX3](=O)[OX2][#6]"),
    # amino groups on an aromatic ring (aniline, toluidines; not amides)
    ("aryl amine", "[NX3;H2,H1;!$(N-[C,S,P]=[O,S,N]);!$(N-[N,O])]c"),
    ("aldehyde", "[CX3H1](=O)[#6]"),
    # two or more Cl/Br/I on one carbon (dichloromethane, chloroform, carbon tetrachloride,
    # pentachloroethane) or on neighbouring carbons (1,2-dichloroethane), and primary or
    # secondary alkyl bromides and iodides (bromoethane, 1-bromopropane): they alkylate amines
    ("halocarbon", "[$([CX4]([Cl,Br,I])[Cl,Br,I]),$([CX4]([Cl,Br,I])[CX4][Cl,Br,I]),$([CX4;H2,H1][Br,I])]"),
    ("carbon disulfide", "S=C=S"),
    # alkyl vinyl and other enol ethers (ethyl vinyl ether, 2-methoxypropene, dihydropyran)
    ("enol ether", "[CX3]=[CX3]-[OX2]-[CX4]"),
    ("furfuryl alcohol", "[CX4;H2,H1]([OX2H1])c1ccco1"),
    ("epoxide", "[CX4]1[OX2][CX4]1"),
    ("isocyanate", "[NX2]=[CX2]=[OX1]"),
    # water, alcohols, glycols and phenols (not the OH of an acid)
    ("hydroxyl", "[$([OX2H2]),$([OX2H1][#6;!$([#6]=[O,S,N])])]"),
    # acyl halides, thionyl and sulfonyl/sulfuryl halides, phosphoryl and phosphorus halides
    ("acid halide", "[$([CX3](=O)[F,Cl,Br,I]),$([SX3](=O)([Cl,Br])),$([SX4](=O)(=O)[Cl,Br]),"
                    "$([PX4](=O)[Cl,Br]),$([PX3][Cl,Br])]"),
    ("anhydride", "[CX3](=O)[OX2][CX3](=O)"),
    ("halosilane", "[Si][Cl,Br,I]"),
    ("dialkyl sulfate", "[SX4](=O)(=O)([OX2][CX4])[OX2][CX4]"),
)

#: Pairs of classes that should not be blended: (class a, class b, why). Common practice (acid and
#: base: salt formation and heat; primary amines condense with aldehydes and ketones, giving
#: imines and water; secondary amines give enamines or aminals and water, more slowly with
#: ketones, faster warm or acid-catalysed; primary and secondary amines open cyclic carbonates
#: and lactones and slowly aminolyse ordinary esters, which is why ketones and esters are kept
#: out of amine hardeners; aniline and furfural condense, the old colour test for furfural);
#: primary and secondary amines add to carbon disulfide (dithiocarbamates, the rubber-accelerator
#: chemistry); amines sensitising nitroalkanes to detonation, and amines reacting with
#: polyhalogenated alkanes and alkyl bromides (ethylenediamine with carbon tetrachloride;
#: pyridine and triethylamine quaternise in dichloromethane on standing; the Menshutkin
#: reaction), are from memory. Common practice too: amines and acids open epoxides (the epoxy
#: cure, exothermic and able to run away in bulk); isocyanates react with amines (ureas), with
#: water, alcohols and phenols (urethanes; water gives carbon dioxide that bursts closed drums);
#: acids set off furfuryl alcohol's resinification (furan binders are cured with acid) and
#: add to enol ethers (the acid-catalysed protection of alcohols with dihydropyran or
#: 2-methoxypropene), which with strong acids polymerise violently (the last from memory).
PAIR_RULES = (
    # most severe first: a pair that two rules match is named by the first
    ("base", "nitroalkane", "amine + nitroalkane: the amine sensitises the nitro compound to detonation"),
    # acid chlorides, thionyl chloride, chlorosilanes and anhydrides with water, alcohols and amines
    # (common practice: hydrolysis and acylation, HCl or SO2 given off; acetic anhydride with water
    # starts slowly and can then run away); dialkyl sulfates alkylate and hydrolyse (from memory)
    ("acid halide", "hydroxyl", "acid halide + water or alcohol: they react violently, giving off corrosive "
                                "gas (HCl, HBr or SO2)"),
    ("acid halide", "base", "acid halide + amine: they react violently (amide or salt, HCl)"),
    ("halosilane", "hydroxyl", "chlorosilane + water or alcohol: they react violently, giving off HCl"),
    ("anhydride", "hydroxyl", "anhydride + water or alcohol: they react exothermically (acid or ester), "
                              "slowly at first and then able to run away"),
    ("anhydride", "primary amine", "anhydride + amine: they react exothermically (amide)"),
    ("anhydride", "secondary amine", "anhydride + amine: they react exothermically (amide)"),
    ("dialkyl sulfate", "hydroxyl", "dialkyl sulfate + water or alcohol: hydrolysis and alkylation (sulfuric "
                                    "acid, heat)"),
    ("dialkyl sulfate", "base", "dialkyl sulfate + amine: they react exothermically (alkylation)"),
    ("isocyanate", "primary amine", "isocyanate + amine: they react fast and hot (urea)"),
    ("isocyanate", "secondary amine", "isocyanate + amine: they react fast and hot (urea)"),
    ("isocyanate", "hydroxyl", "isocyanate + water, alcohol or phenol: they react exothermically (urethane; "
                               "water gives carbon dioxide, which can burst a closed container)"),
    ("base", "epoxide", "amine + epoxide: they react exothermically (the epoxy cure), able to run away "
                        "in bulk"),
    ("acid", "epoxide", "acid + epoxide: the ring opens exothermically"),
    ("acid", "furfuryl alcohol", "acid + furfuryl alcohol: the acid sets off its exothermic resinification "
                                 "(violent with strong acids)"),
    ("acid", "enol ether", "acid + vinyl or enol ether: the acid adds to the ether and sets off its "
                           "hydrolysis or polymerisation, exothermically"),
    ("acid", "base", "acid + base: they react (salt, heat)"),
    # aniline + acetic acid: a salt, and on heating acetanilide and water (common practice)
    ("acid", "aryl amine", "acid + aromatic amine: they react (salt; on heating the amide and water)"),
    ("base", "halocarbon", "amine + polyhalogenated alkane or alkyl bromide: they react (alkylation, "
                           "loss of HCl or HBr), slowly on standing with dichloromethane, fast and hot "
                           "with carbon tetrachloride and polyamines"),
    ("primary amine", "carbon disulfide", "primary amine + carbon disulfide: they react exothermically "
                                          "(dithiocarbamate)"),
    ("secondary amine", "carbon disulfide", "secondary amine + carbon disulfide: they react exothermically "
                                            "(dithiocarbamate)"),
    ("primary amine", "carbonyl", "primary amine + aldehyde or ketone: they condense (imine and water)"),
    ("secondary amine", "carbonyl", "secondary amine + aldehyde or ketone: they condense on standing, "
                                    "faster when warm or acid-catalysed (enamine or aminal and water)"),
    ("aryl amine", "aldehyde", "aromatic amine + aldehyde: they condense (imine and water)"),
    ("primary amine", "ester", "primary amine + ester, lactone or carbonate: aminolysis on standing "
                               "(amide, hydroxy amide or carbamate), fast with cyclic carbonates and lactones"),
    ("secondary amine", "ester", "secondary amine + ester, lactone or carbonate: aminolysis on standing "
                                 "(amide, hydroxy amide or carbamate), fast with cyclic carbonates and lactones"),
)


@functools.lru_cache(maxsize=1)
def _pair_patterns():
    from rdkit import Chem

    return [Chem.MolFromSmarts(sma) for _, sma in PAIR_CLASSES]


@functools.lru_cache(maxsize=8192)
def _pair_row(smiles: str) -> tuple:
    if not smiles:
        return (False,) * len(PAIR_CLASSES)
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        return (False,) * len(PAIR_CLASSES)
    return tuple(bool(mol.HasSubstructMatch(p)) for p in _pair_patterns())


def pair_classes(library: pd.DataFrame) -> np.ndarray:
    """(n, k) bool: which :data:`PAIR_CLASSES` each liquid belongs to (from its SMILES; one RDKit
    match per distinct structure, cached)."""
    smiles = library["smiles"].astype("string").fillna("").astype(str).tolist() if "smiles" in library \
        else [""] * len(library)
    return np.array([_pair_row(s) for s in smiles], dtype=bool).reshape(len(smiles), len(PAIR_CLASSES))


def reactive_pair_matrix(library: pd.DataFrame) -> np.ndarray:
    """(n, n) bool, True where two liquids of ``library`` should not be blended (:data:`PAIR_RULES`)."""
    c = pair_classes(library)
    names = [k for k, _ in PAIR_CLASSES]
    out = np.zeros((len(c), len(c)), dtype=bool)
    for a, b, _ in PAIR_RULES:
        ca, cb = c[:, names.index(a)], c[:, names.index(b)]
        out |= np.outer(ca, cb) | np.outer(cb, ca)
    np.fill_diagonal(out, False)
    return out


def pair_reasons(rows: pd.DataFrame) -> list[str]:
    """Why the liquids of ``rows`` (a few components of one blend) should not be blended together:
    one text per reacting pair, e.g. ``"formic acid + morpholine: acid + base: ..."``."""
    c = pair_classes(rows)
    names = [k for k, _ in PAIR_CLASSES]
    liq = rows["name"].astype(str).tolist()
    out = []
    for i in range(len(liq)):
        for j in range(i + 1, len(liq)):
            for a, b, why in PAIR_RULES:
                ia, ib = names.index(a), names.index(b)
                if (c[i, ia] and c[j, ib]) or (c[i, ib] and c[j, ia]):
                    out.append(f"{liq[i]} + {liq[j]}: {why}")
                    break               # one reason per pair, the most severe (PAIR_RULES order)
    return out
