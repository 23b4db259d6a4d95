"""Will two liquids mix? Flory-Huggins with Hansen parameters, plus a donor/acceptor term.

The free energy of mixing per reference volume V_r (Flory, J. Chem. Phys. 10 (1942) 51;
Huggins, Ann. N. Y. Acad. Sci. 43 (1942) 1), with phi the volume fraction of liquid 1 and
N_i = V_i* / V_r::

    g(phi) / RT = (phi / N1) ln phi + ((1 - phi) / N2) ln(1 - phi) + chi phi (1 - phi)

Interaction energy density A12 (J/cm^3 = MPa) and chi = V_r A12 / (R T):

* plain Hansen form (:data:`PLAIN`; Hansen's handbook, 2nd ed., 2007, ch. 1-2), V_i* = V_i::

      A12 = (dD1 - dD2)^2 + 0.25 (dP1 - dP2)^2 + 0.25 (dH1 - dH2)^2

* this project's donor/acceptor-aware form (:data:`HBOND`, the default)::

      A12 = (dD1 - dD2)^2 + w_p (q1 q2)^2 (dP1 - dP2)^2 + w_h (dH1 r1 - dH2 r2)(dH1 / r1 - dH2 / r2)
      r_i = sqrt((alpha_i + f) / (beta_i + f))          V_i* = max(V_i (1 + c m_i), V_min)

  Each liquid's hydrogen-bond parameter is split into a donor part dH r and an acceptor part
  dH / r (their product is dH^2, the hydrogen-bond cohesive energy density), in the ratio of its
  Kamlet-Taft acidity alpha and basicity beta found from its structure with RDKit
  (:func:`site_counts`, :func:`site_strengths`; Kamlet-Taft weights per site class). The cross
  energy then follows the donor-acceptor (acid-base) combining rule (D1 - D2)(A1 - A2) instead
  of the geometric mean hidden in (dH1 - dH2)^2; the difference is
  -(sqrt(D1 A2) - sqrt(D2 A1))^2 <= 0, so the split only ever favours mixing, and most where
  one liquid has spare donors (water) and the other spare acceptors (ketones, ethers, esters,
  amides, nitriles, sulfoxides, tertiary amines). The same acid-base product form is used in
  MOSCED (Thomas & Eckert, Ind. Eng. Chem. Process Des. Dev. 23 (1984) 194) and in the split
  of dH into acidic and basic parts by Stefanis & Panayiotou (Int. J. Pharm. 426 (2012) 29);
  both from memory. ``f`` (:data:`ACID_FLOOR`, 0.1) keeps the split finite for liquids without
  donor or acceptor sites; V_min (:data:`V_MIN`, 43.4 cm^3/mol) is a floor on the volume in the
  combinatorial entropy: water counted by its contact surface (UNIQUAC q), not its volume (it
  only affects liquids smaller than 43.4 cm^3/mol, above all water). q_i (:data:`AROMATIC_Q`,
  0.9 for aromatic liquids, else 1) is MOSCED's induction factor: a polar molecule induces a
  dipole in a polarisable aromatic ring, which softens the polar mismatch (methanol mixes with
  benzene and toluene but not with hexane). All three are set from published values, not
  fitted. m_i is the number of alcohol O-H groups beyond the first (glycols 1, glycerol 2):
  polyols form a three-dimensional hydrogen-bond network and enter the combinatorial entropy
  as clusters (c = :attr:`MixingModel.polyol_c`, fitted between 0 and 1). w_p, w_h, c and the
  scale tau of the probability P(miscible) = 1 / (1 + exp(ln(chi / chi_c) / tau)) are the only
  fitted numbers, by one maximum-likelihood fit
  (:mod:`selector.mixing_fit`, on ``parameters/miscibility_pairs.csv``; accuracy in
  ``parameters/miscibility_accuracy.md``). Away from 25 C the polar term carries the Keesom
  factor (298.15 K / T) (:meth:`MixingModel.interaction`).

  Cross hydrogen bonds (:meth:`MixingModel.association`): when one liquid's strongest acceptor
  site is stronger than the other's own (water with pyridine, amines, amides, DMSO), a contact
  between them can form a hydrogen bond better than those it replaces. With a and b the
  strongest donor H and acceptor site of each molecule (Kamlet-Taft strengths per site), the
  gain is x = -(a1 - a2)(b1 - b2) >= 0, and::

      chi = V_r A12 / (R T) - ln(1 + q (exp(E x / (R T)) - 1))      q = K0 (1000 / V_r) / z

  the free energy of a contact that bonds in a share q of its orientations. E = 42.0 kJ/mol and
  K0 = 0.0805 dm^3/mol come from Abraham's relation for 1:1 hydrogen-bond complexes,
  log10 K = 7.354 a b - 1.094 (:data:`ASSOC_ENERGY`, :data:`ASSOC_K0`); z = 10 is the lattice
  coordination number of UNIQUAC (:data:`LATTICE_Z`). Nothing in it is fitted.

The pair splits when chi > chi_c = 0.5 (N1^-0.5 + N2^-0.5)^2 (Flory, Principles of Polymer
Chemistry, 1953, ch. 13). V_r cancels out of the phase behaviour in volume fractions and is
taken as the smaller V_i*. Away from 25 C the HSP follow the Hansen-Beerbower relations
(:func:`selector.hansen.hsp_at_temperature`) and the molar volumes V exp(alpha (T - 25)); chi
falls with T, so the model has an upper critical solution temperature, where chi(T) = chi_c
(:func:`ucst`). The coexisting compositions (the binodal) come from equal chemical potentials
of both liquids in both phases (:func:`binodal`, Newton's method); the spinodal from
d2g/dphi2 = 0 (:func:`spinodal`).

States at a temperature:

* ``"miscible"``: one phase in all proportions (chi <= chi_c);
* ``"immiscible"``: a gap in which the smaller of the two mutual solubilities is below
  :data:`IMMISCIBLE_BELOW_WT_PCT` (1 wt %): one liquid hardly enters the other, and a separate
  layer forms at any useful ratio (water with hexane, toluene, dichloromethane, 1-octanol);
* ``"partially miscible"``: a gap in which both mutual solubilities are 1 wt % or more (water
  with 1-butanol, ethyl acetate, diethyl ether, 2-butanone; methanol with hexane).

Lower critical solution behaviour (water with triethylamine, some glycol ethers) is outside
this model; such pairs get a note and low confidence. The model overestimates the solubility
of water in organic liquids (often tenfold); the dilute end on the water side is closer.
Every answer is a hint for a small test mix; read the safety data sheets of both liquids.
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .errors import SelectorError, plural
from .hansen import R_GAS
from .library import load_library, locate

#: A gap is "immiscible" when the smaller mutual solubility is below this (wt %); else "partially".
IMMISCIBLE_BELOW_WT_PCT = 1.0

STATES = ("miscible", "partially miscible", "immiscible")


@dataclass(frozen=True)
class MixingModel:
    """Weights of the interaction energy density A12 (J/cm^3) and the entropy volume floor.

    ``w_d, w_p, w_h``: weights of the dD, dP and hydrogen-bond terms (dimensionless);
    ``acid_floor``: Kamlet-Taft floor added to alpha and beta before dH is split into donor and
    acceptor parts (0 = no split: the geometric-mean term (dH1 - dH2)^2 of the plain form);
    ``v_min``: smallest molar volume (cm^3/mol) used in the combinatorial entropy (0 = the
    liquid's own molar volume; see the module docstring); ``aromatic_q``: induction factor q of
    aromatic liquids, the polar term is weighted by (q1 q2)^2 (1 = no induction correction);
    ``polyol_c``: a liquid with n > 1 alcohol O-H groups per molecule (glycols, glycerol) enters
    the combinatorial entropy with the volume V (1 + c (n - 1)) (0 = no such correction);
    ``assoc_z``: lattice coordination number of the cross hydrogen-bond term
    :meth:`association` (0 = no such term); ``tau``: scale of the logistic model
    P(miscible) = 1 / (1 + exp(ln(chi / chi_c) / tau)) fitted with the other numbers
    (:mod:`selector.mixing_fit`; 0 = no probability); ``keesom``: exponent n of the factor
    (298.15 K / T)^n on the polar term away from 25 C (1 = Keesom orientation averaging, see
    :meth:`interaction`; 0 = the polar term moves with T only through the Hansen-Beerbower dP).
    """

    name: str
    w_d: float = 1.0
    w_p: float = 0.25
    w_h: float = 0.25
    acid_floor: float = 0.0
    v_min: float = 0.0
    source: str = ""
    aromatic_q: float = 1.0
    polyol_c: float = 0.0
    assoc_z: float = 0.0
    tau: float = 0.0
    keesom: float = 0.0

    def p_miscible(self, chi, chi_critical):
        """Probability of one phase in all proportions from ln(chi / chi_c) and :attr:`tau`.

        NaN when the model has no fitted scale. The scale comes from the reference pairs at 25 C.

        >>> m = MixingModel("demo", tau=0.1)
        >>> round(float(m.p_miscible(1.0, 2.0)), 4), round(float(m.p_miscible(2.0, 2.0)), 2)
        (0.999, 0.5)
        """
        if not self.tau:
            return np.full(np.shape(chi), np.nan) if np.ndim(chi) else math.nan
        with np.errstate(divide="ignore", invalid="ignore"):
            lr = np.log(np.maximum(np.asarray(chi, float), 1e-300) / np.asarray(chi_critical, float))
        p = 0.5 * (1.0 - np.tanh(0.5 * lr / self.tau))    # logistic, overflow-free
        return float(p) if np.ndim(p) == 0 else p

    def keesom_factor(self, t_c):
        """(298.15 K / T)^keesom, the temperature factor of the polar term (see :meth:`interaction`);
        1 when ``keesom`` is 0. Works on floats and arrays of t_c (C).

        >>> round(float(MixingModel("demo", keesom=1.0).keesom_factor(75.0)), 4)
        0.8564
        """
        if not self.keesom:
            return 1.0
        return (T_REF / (np.asarray(t_c, float) + 273.15)) ** self.keesom

    def split_ratio(self, sites):
        """sqrt((alpha + f) / (beta + f)) per liquid from (..., 2) (alpha, beta) arrays; 1 if no split."""
        s = np.asarray(sites, float)[..., :2]
        if not self.acid_floor:
            return np.ones(s.shape[:-1])
        s = np.nan_to_num(s, nan=0.0)
        return np.sqrt((s[..., 0] + self.acid_floor) / (s[..., 1] + self.acid_floor))

    def induction(self, sites):
        """Induction factor q per liquid from (..., 3) site arrays (third column: aromatic 0/1)."""
        s = np.asarray(sites, float)
        if self.aromatic_q == 1.0 or s.shape[-1] < 3:
            return np.ones(s.shape[:-1])
        return 1.0 - (1.0 - self.aromatic_q) * np.nan_to_num(s[..., 2], nan=0.0)

    def interaction(self, hsp1, hsp2, sites1=None, sites2=None, t_c=25.0):
        """A12 in J/cm^3 for broadcastable (..., 3) HSP arrays and (..., 3) site arrays at t_c (C).

        Site arrays: (alpha, beta, aromatic 0/1) from :func:`site_strengths`. Polar term:
        w_p (q1 q2)^2 (dP1 - dP2)^2 with q from :meth:`induction`. Hydrogen-bond term:
        w_h (dH1 r1 - dH2 r2)(dH1 / r1 - dH2 / r2) with r from :meth:`split_ratio` (equal to
        w_h (dH1 - dH2)^2 when r1 = r2, e.g. without a split). Away from 25 C the polar term
        is multiplied by (298.15 / T)^keesom: the orientation-averaged dipole-dipole energy
        falls as 1/T (Keesom, Phys. Z. 22 (1921) 129; the standard result, e.g. Israelachvili,
        Intermolecular and Surface Forces, ch. 4), which the density-only Hansen-Beerbower
        shift of dP leaves out. The HSP passed in are those at t_c.
        """
        h1 = np.asarray(hsp1, float)
        h2 = np.asarray(hsp2, float)
        d = h1 - h2
        wp = self.w_p
        if self.aromatic_q != 1.0 and sites1 is not None and sites2 is not None:
            wp = wp * (self.induction(sites1) * self.induction(sites2)) ** 2
        if self.keesom:
            wp = wp * self.keesom_factor(t_c)
        a = self.w_d * d[..., 0] ** 2 + wp * d[..., 1] ** 2
        if self.acid_floor and sites1 is not None and sites2 is not None:
            r1, r2 = self.split_ratio(sites1), self.split_ratio(sites2)
            hb = (h1[..., 2] * r1 - h2[..., 2] * r2) * (h1[..., 2] / r1 - h2[..., 2] / r2)
        else:
            hb = d[..., 2] ** 2
        return a + self.w_h * hb

    def association(self, sites1, sites2, vr, t_c=25.0):
        """Cross hydrogen-bond lowering of chi (dimensionless, >= 0) at t_c (C).

        x = -(a1 - a2)(b1 - b2), clipped at 0, with a the strongest donor H and b the strongest
        acceptor site of each liquid (Kamlet-Taft strengths per site, columns 4 and 5 of
        :func:`site_strengths`): what a contact gains in donor x acceptor strength when the
        liquids exchange partners (a1 b2 + a2 b1 in place of a1 b1 + a2 b2). Such a bond, of
        energy E x (:data:`ASSOC_ENERGY`), forms in a share q = K0 (1000 / V_r) / z of the
        orientations of a contact (:data:`ASSOC_K0`; V_r in cm^3/mol; z = ``assoc_z``), and
        lowers chi by ln(1 + q (exp(E x / (R T)) - 1)).

        >>> m = MixingModel("demo", assoc_z=10.0)
        >>> water, pyridine, ether = [0.58, 0.47], [0.0, 0.64], [0.0, 0.45]
        >>> round(float(m.association(water, pyridine, 43.4)), 3)
        0.588
        >>> float(m.association(water, ether, 43.4))       # ether: weaker acceptor than water
        0.0
        """
        if not self.assoc_z:
            return 0.0
        s1 = np.nan_to_num(np.asarray(sites1, float), nan=0.0)
        s2 = np.nan_to_num(np.asarray(sites2, float), nan=0.0)
        k = 4 if s1.shape[-1] >= 6 else 0   # full site arrays, or bare (a, b) pairs
        x = np.maximum(-(s1[..., k] - s2[..., k]) * (s1[..., k + 1] - s2[..., k + 1]), 0.0)
        q = np.minimum(ASSOC_K0 * 1000.0 / (self.assoc_z * np.asarray(vr, float)), 1.0)
        rt = R_GAS * (np.asarray(t_c, float) + 273.15)
        return np.log1p(q * np.expm1(ASSOC_ENERGY * x / rt))

    def chi(self, a12, vr, sites1=None, sites2=None, t_c=25.0):
        """Flory-Huggins chi = V_r A12 / (R T) - :meth:`association` (V_r cm^3/mol, A12 J/cm^3)."""
        t = np.asarray(t_c, float)
        chi = vr * a12 / (R_GAS * (t + 273.15))
        if self.assoc_z and sites1 is not None and sites2 is not None:
            chi = chi - self.association(sites1, sites2, vr, t)
        return chi

    def entropy_volume(self, v, sites=None):
        """Volume used for the combinatorial entropy, max(V (1 + c (n - 1)), v_min), cm^3/mol.

        ``sites``: (..., 4) arrays from :func:`site_strengths` (fourth column: n - 1, the alcohol
        O-H groups beyond the first); without them the factor is 1.
        """
        v = np.asarray(v, float)
        if self.polyol_c and sites is not None:
            s = np.asarray(sites, float)
            if s.shape[-1] >= 4:
                v = v * (1.0 + self.polyol_c * np.nan_to_num(s[..., 3], nan=0.0))
        return np.maximum(v, self.v_min)


#: Temperature (K) at which the tabulated HSP hold; reference of the Keesom factor.
T_REF = 298.15

#: Kamlet-Taft acidity floor of the donor/acceptor split: the alpha of the weakly C-H-acidic
#: aprotic liquids (acetone 0.08, dichloromethane 0.13, acetonitrile 0.19; Marcus, Chem. Soc.
#: Rev. 22 (1993) 409, from memory). Set, not fitted.
ACID_FLOOR = 0.1

#: Entropy volume floor (cm^3/mol): water's contact surface as an equivalent volume, the
#: UNIQUAC surface parameter of water q = 1.40 (Abrams & Prausnitz, AIChE J. 21 (1975) 116;
#: also in ``thermo.unifac.UFSG``) times the median molar volume per unit q of the other 72
#: reference liquids, 31.0 cm^3/mol (UNIFAC group Q values of ``thermo.unifac.UFSG``). Set,
#: not fitted.
V_MIN = 43.4

#: Induction factor of aromatic liquids in the polar term, from MOSCED (q = 0.9 for aromatic
#: molecules, 1 otherwise; Lazzaroni, Bush, Eckert, Frank, Gupta & Olesik, Ind. Eng. Chem. Res.
#: 44 (2005) 4075; from memory): a polar molecule induces a dipole in a polarisable aromatic
#: ring, which softens the polar mismatch. Set, not fitted.
AROMATIC_Q = 0.9

#: Cross hydrogen bonds, set from Abraham's relation for 1:1 hydrogen-bond complexes in
#: tetrachloromethane at 25 C, log10 K = 7.354 a b - 1.094 with a, b the donor and acceptor
#: strengths of the two sites and K in dm^3/mol (Abraham, Duce, Prior, Barratt, Morris & Taylor,
#: J. Chem. Soc. Perkin Trans. 2 (1989) 1355; from memory). Its scales alpha2H / beta2H are
#: close to, not equal to, the Kamlet-Taft strengths used here. Energy per unit of the
#: strength gain x: E = 7.354 ln(10) R (298.15 K) (J/mol). Set, not fitted.
ASSOC_ENERGY = 7.354 * math.log(10.0) * R_GAS * 298.15
#: K at a b = 0 (dm^3/mol); a contact in a lattice of sites of V_r cm^3/mol sees a partner
#: concentration 1000 / V_r mol/dm^3 shared among z contacts, so the bonding share of its
#: orientations is q = K0 (1000 / V_r) / z. Set, not fitted.
ASSOC_K0 = 10.0 ** -1.094
#: Lattice coordination number z = 10, the standard value of UNIQUAC (Abrams & Prausnitz,
#: AIChE J. 21 (1975) 116) and UNIFAC. Set, not fitted.
LATTICE_Z = 10.0

#: The plain Hansen Flory-Huggins form (Hansen's handbook, ch. 2).
PLAIN = MixingModel("plain Hansen Flory-Huggins", 1.0, 0.25, 0.25, 0.0, 0.0,
                    "C. M. Hansen, Hansen Solubility Parameters, 2nd ed., 2007")

#: Donor/acceptor-aware form; only w_p, w_h, polyol_c and the probability scale tau are fitted
#: (one likelihood), on parameters/miscibility_pairs.csv by :func:`selector.mixing_fit.fit`
#: (all pairs; tau = 0.1009 there, kept to three digits);
#: :data:`ACID_FLOOR`, :data:`V_MIN`, :data:`AROMATIC_Q` and the cross hydrogen-bond numbers
#: (:data:`ASSOC_ENERGY`, :data:`ASSOC_K0`, :data:`LATTICE_Z`) are set.
HBOND = MixingModel("donor/acceptor Flory-Huggins", 1.0, 0.225, 0.0925, ACID_FLOOR, V_MIN,
                    "this project, w_p, w_h, polyol_c and tau fitted on parameters/miscibility_pairs.csv",
                    AROMATIC_Q, 1.0, LATTICE_Z, 0.101, 1.0)

DEFAULT_MODEL = HBOND

#: Expansion coefficient (1/K) assumed where the library has none (typical organic liquid).
DEFAULT_EXPANSION = 1.0e-3


def _model(model) -> MixingModel:
    if model is None:
        return DEFAULT_MODEL
    if isinstance(model, MixingModel):
        return model
    if isinstance(model, str):
        m = {"plain": PLAIN, "hbond": HBOND, "default": DEFAULT_MODEL}.get(model.strip().lower())
        if m is not None:
            return m
    raise SelectorError(f"unknown mixing model {model!r}; use 'hbond' (default) or 'plain'")


# ---------------------------------------------------------------- structure: H-bond sites

#: Acceptor classes: (label, SMARTS whose first atom is the acceptor, strength per site).
#: Strengths are the Kamlet-Taft basicity beta of the prototype liquid of each class (Kamlet,
#: Abboud, Abraham & Taft, J. Org. Chem. 48 (1983) 2877; Marcus, Chem. Soc. Rev. 22 (1993) 409;
#: quoted from memory, rounded). The first class that matches an atom wins.
ACCEPTOR_CLASSES = [
    ("water O", "[OX2H2]", 0.47),                                    # water 0.47
    ("sulfoxide O", "[OX1]=[SX3]", 0.76),                            # DMSO 0.76
    ("sulfone O", "[OX1]=[SX4]", 0.20),                              # sulfolane 0.39 / 2
    ("phosphoryl O", "[OX1]=[PX4]", 0.80),                           # triethyl phosphate 0.77
    ("carbonate C=O", "[OX1]=[CX3]([OX2])[OX2]", 0.40),              # propylene carbonate 0.40
    ("amide C=O", "[OX1]=[#6][#7]", 0.72),                           # DMF 0.69, DMAc 0.76, NMP 0.77
    ("ester/acid C=O", "[OX1]=[#6][OX2]", 0.45),                     # ethyl acetate 0.45
    ("ketone/aldehyde C=O", "[OX1]=[#6]", 0.48),                     # acetone 0.48, 2-butanone 0.48
    ("amine N", "[NX3;!$(N[#6,#16,#15]=[O,S,N]);!$(Na);!$(N~[O,N]);!$(N[#6]#N)]", 0.70),  # Et3N 0.71
    ("aniline N", "[NX3;!$(N[#6]=[O,S,N]);!$(N~[O,N])]a", 0.50),      # aniline 0.50
    ("pyridine N", "[nX2]", 0.64),                                   # pyridine 0.64
    ("nitrile N", "[NX1]#[#6]", 0.35),                               # acetonitrile 0.31-0.40
    ("alcohol O", "[OX2H1][CX4]", 0.70),                             # methanol 0.66, ethanol 0.75
    ("phenol O", "[OX2H1]c", 0.30),                                  # phenol ~0.3
    ("aliphatic ether O", "[OX2H0;!$(O[#6]=[O,S,N]);!$(Oa)]([#6])[#6]", 0.45),  # Et2O 0.47, THF 0.55
    ("aryl ether O", "[OX2H0;!$(O[#6]=[O,S,N])](a)[#6]", 0.30),       # anisole 0.32
]

#: Donor classes: (label, SMARTS whose first atom carries the H, strength per H atom), the
#: Kamlet-Taft acidity alpha of the prototype divided by its number of such H (same sources).
DONOR_CLASSES = [
    ("water H", "[OX2H2]", 0.58),                                    # water 1.17 / 2
    ("acid O-H", "[OX2H1][#6]=O", 1.10),                             # acetic acid 1.12
    ("phenol O-H", "[OX2H1]c", 0.90),
    ("alcohol O-H", "[OX2H1]", 0.80),                                # ethanol 0.86, 2-propanol 0.76
    ("amide N-H", "[NX3;!H0][#6]=[O,S]", 0.35),                       # formamide 0.71 / 2
    ("aniline N-H", "[NX3;!H0]a", 0.13),                              # aniline 0.26 / 2
    ("amine N-H", "[NX3;!H0]", 0.05),                                # diethylamine 0.03
    ("chloroform C-H", "[CX4H1](Cl)(Cl)Cl", 0.44),                   # chloroform 0.44
]


@functools.lru_cache(maxsize=1)
def _patterns():
    from rdkit import Chem

    acc = [(lab, Chem.MolFromSmarts(sm), w) for lab, sm, w in ACCEPTOR_CLASSES]
    don = [(lab, Chem.MolFromSmarts(sm), w) for lab, sm, w in DONOR_CLASSES]
    return acc, don


def site_counts(smiles: str) -> tuple[float, float]:
    """(alpha, beta): summed hydrogen-bond donor and acceptor strengths of one molecule.

    Each acceptor atom (O, N) and each donor H is assigned to the first matching class of
    :data:`ACCEPTOR_CLASSES` / :data:`DONOR_CLASSES` and weighted by the Kamlet-Taft strength of
    that class (see the tables for sources). Unknown or empty SMILES -> (nan, nan).

    >>> site_counts("O"), site_counts("CC(C)=O"), site_counts("CCO")
    ((1.16, 0.47), (0.0, 0.48), (0.8, 0.7))
    """
    return _sites(smiles)[:2]


def site_maxima(smiles: str) -> tuple[float, float]:
    """(a, b): the strongest donor H and the strongest acceptor site of one molecule.

    Same classes and Kamlet-Taft strengths as :func:`site_counts`, per site instead of summed
    (a per H atom, b per acceptor atom); 0 where a molecule has none, (nan, nan) for bad SMILES.

    >>> site_maxima("O"), site_maxima("CCNCC"), site_maxima("OCCOCCCC")
    ((0.58, 0.47), (0.05, 0.7), (0.8, 0.7))
    """
    return _sites(smiles)[2:]


@functools.lru_cache(maxsize=4096)
def _sites(smiles: str) -> tuple[float, float, float, float]:
    """(alpha, beta, strongest donor H, strongest acceptor) of one molecule; see site_counts."""
    if not smiles:
        return (math.nan,) * 4
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        return (math.nan,) * 4
    acc, don = _patterns()
    beta = beta_max = 0.0
    seen: set[int] = set()
    for _, patt, w in acc:
        for match in mol.GetSubstructMatches(patt):
            if match[0] not in seen:
                seen.add(match[0])
                beta += w
                beta_max = max(beta_max, w)
    alpha = alpha_max = 0.0
    seen = set()
    for _, patt, w in don:
        for match in mol.GetSubstructMatches(patt):
            i = match[0]
            if i not in seen:
                seen.add(i)
                nh = mol.GetAtomWithIdx(i).GetTotalNumHs()
                alpha += w * nh
                if nh:
                    alpha_max = max(alpha_max, w)
    return (round(alpha, 6), round(beta, 6), alpha_max, beta_max)


def site_densities(smiles, molar_volume) -> np.ndarray:
    """(n, 2) excess donor and acceptor strengths per volume eD, eA (mol/cm^3).

    eD = max(alpha - beta, 0) / V, eA = max(beta - alpha, 0) / V with alpha, beta from
    :func:`site_counts` and V the molar volume (cm^3/mol). Liquids without a usable SMILES get
    (0, 0), i.e. the plain form.

    >>> site_densities(["O", "CC(C)=O"], [18.07, 73.8]).round(4).tolist()
    [[0.0382, 0.0], [0.0, 0.0065]]
    """
    smi = [("" if s is None or (isinstance(s, float) and math.isnan(s)) else str(s)) for s in smiles]
    counts = np.array([site_counts(s) for s in smi], dtype=float).reshape(-1, 2)
    counts = np.nan_to_num(counts, nan=0.0)
    v = np.asarray(molar_volume, float).reshape(-1)
    excess = np.stack([np.maximum(counts[:, 0] - counts[:, 1], 0.0),
                       np.maximum(counts[:, 1] - counts[:, 0], 0.0)], axis=1)
    return excess / v[:, None]


@functools.lru_cache(maxsize=4096)
def extra_alcohol_groups(smiles: str) -> int:
    """Alcohol O-H groups (O-H on an sp3 carbon) beyond the first; 0 for bad SMILES.

    >>> extra_alcohol_groups("OCCO"), extra_alcohol_groups("OCC(O)CO"), extra_alcohol_groups("CCO")
    (1, 2, 0)
    """
    if not smiles:
        return 0
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        return 0
    n = len(mol.GetSubstructMatches(_alcohol_pattern()))
    return max(n - 1, 0)


@functools.lru_cache(maxsize=1)
def _alcohol_pattern():
    from rdkit import Chem

    return Chem.MolFromSmarts("[OX2H1][CX4]")


@functools.lru_cache(maxsize=4096)
def is_aromatic(smiles: str) -> bool:
    """True when the molecule has an aromatic ring (RDKit aromaticity); False for bad SMILES.

    >>> is_aromatic("c1ccccc1"), is_aromatic("C1CCCCC1"), is_aromatic("c1ccncc1")
    (True, False, True)
    """
    if not smiles:
        return False
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    mol = Chem.MolFromSmiles(smiles)
    return bool(mol is not None and any(a.GetIsAromatic() for a in mol.GetAtoms()))


def site_strengths(smiles) -> np.ndarray:
    """(n, 6): Kamlet-Taft alpha and beta summed over the sites, aromatic (0/1), extra O-H
    groups, and the strongest donor H and acceptor site.

    From :func:`site_counts`, :func:`is_aromatic`, :func:`extra_alcohol_groups` and
    :func:`site_maxima`; liquids without a usable SMILES get zeros, which makes the
    donor/acceptor split, the induction factor, the polyol entropy and the cross hydrogen-bond
    term neutral (the plain form).

    >>> site_strengths(["O", "CC(C)=O", "c1ccccc1", "OCCO", None]).tolist()
    [[1.16, 0.47, 0.0, 0.0, 0.58, 0.47], [0.0, 0.48, 0.0, 0.0, 0.0, 0.48], [0.0, 0.0, 1.0, 0.0, 0.0, 0.0], [1.6, 1.4, 0.0, 1.0, 0.8, 0.7], [0.0, 0.0, 0.0, 0.0, 0.0, 0.0]]
    """
    smi = [("" if s is None or (isinstance(s, float) and math.isnan(s)) else str(s)) for s in smiles]
    sites = np.array([_sites(s) for s in smi], dtype=float).reshape(-1, 4)
    arom = np.array([float(is_aromatic(s)) for s in smi]).reshape(-1, 1)
    extra = np.array([float(extra_alcohol_groups(s)) for s in smi]).reshape(-1, 1)
    sites = np.nan_to_num(sites, nan=0.0)
    return np.hstack([sites[:, :2], arom, extra, sites[:, 2:]])


# ---------------------------------------------------------------- Flory-Huggins core

def critical_chi(n1, n2):
    """Critical chi of a binary Flory-Huggins mixture: 0.5 (N1^-0.5 + N2^-0.5)^2.

    N_i = V_i / V_r (Flory, Principles of Polymer Chemistry, 1953, ch. 13).

    >>> float(critical_chi(1.0, 1.0))
    2.0
    """
    n1 = np.asarray(n1, float)
    n2 = np.asarray(n2, float)
    return 0.5 * (n1 ** -0.5 + n2 ** -0.5) ** 2


def critical_fraction(n1, n2):
    """Volume fraction of liquid 1 at the critical point: sqrt(N2) / (sqrt(N1) + sqrt(N2)).

    >>> float(critical_fraction(1.0, 4.0))
    0.6666666666666666
    """
    r1 = np.sqrt(np.asarray(n1, float))
    r2 = np.sqrt(np.asarray(n2, float))
    return r2 / (r1 + r2)


def chemical_potentials(phi, chi, n1, n2, one_minus_phi=None):
    """Exchange chemical potentials (mu_i - mu_i^0) / RT of liquids 1 and 2 at volume fraction phi.

    mu1/RT = ln phi + (1 - N1/N2)(1 - phi) + N1 chi (1 - phi)^2 and
    mu2/RT = ln(1 - phi) + (1 - N2/N1) phi + N2 chi phi^2 (Flory, 1953, ch. 12).
    ``one_minus_phi``: 1 - phi given separately, for phi so close to 1 that 1 - phi is not
    representable as a difference.

    >>> [round(float(x), 6) for x in chemical_potentials(0.5, 0.0, 1.0, 1.0)]
    [-0.693147, -0.693147]
    """
    phi = np.asarray(phi, float)
    q = 1.0 - phi if one_minus_phi is None else np.asarray(one_minus_phi, float)
    return _mu(np.log(phi), np.log(q), phi, q, chi, n1, n2)


def _mu(lnp, lnq, p, q, chi, n1, n2):
    mu1 = lnp + (1.0 - n1 / n2) * q + n1 * chi * q * q
    mu2 = lnq + (1.0 - n2 / n1) * p + n2 * chi * p * p
    return mu1, mu2


def spinodal(chi, n1, n2):
    """Spinodal volume fractions (low, high) of liquid 1, where d2g/dphi2 = 0; NaN if chi <= chi_c.

    Roots of 2 chi N1 N2 phi^2 + (N1 - N2 - 2 chi N1 N2) phi + N2 = 0.

    >>> [round(float(x), 4) for x in spinodal(2.5, 1.0, 1.0)]
    [0.2764, 0.7236]
    """
    chi = np.asarray(chi, float)
    n1 = np.asarray(n1, float)
    n2 = np.asarray(n2, float)
    a = 2.0 * chi * n1 * n2
    b = n1 - n2 - a
    disc = b * b - 4.0 * a * n2
    with np.errstate(invalid="ignore", divide="ignore"):
        s = np.sqrt(np.where(disc > 0, disc, np.nan))
        lo = (-b - s) / (2 * a)
        hi = (-b + s) / (2 * a)
    ok = chi > critical_chi(n1, n2)
    return np.where(ok, lo, np.nan), np.where(ok, hi, np.nan)


def _logit(p):
    return np.log(p) - np.log1p(-p)


def binodal(chi, n1, n2, tol: float = 1e-12, max_iter: int = 100):
    """Coexisting volume fractions (phi_a, phi_b) of liquid 1 (phi_a < phi_b); NaN if no gap.

    Solves mu1(phi_a) = mu1(phi_b) and mu2(phi_a) = mu2(phi_b) (equal chemical potentials,
    :func:`chemical_potentials`) by Newton's method in logit coordinates, vectorised over
    arrays of chi, N1, N2. Start: the dilute-limit solution ln phi_a = -(1 - N1/N2) - N1 chi,
    ln(1 - phi_b) = -(1 - N2/N1) - N2 chi, kept outside the spinodal.

    >>> [round(float(x), 4) for x in binodal(2.5, 1.0, 1.0)]
    [0.1448, 0.8552]
    """
    chi, n1, n2 = np.broadcast_arrays(np.asarray(chi, float), np.asarray(n1, float),
                                      np.asarray(n2, float))
    shape = chi.shape
    chi, n1, n2 = chi.ravel(), n1.ravel(), n2.ravel()
    pa = np.full(chi.shape, np.nan)
    pb = np.full(chi.shape, np.nan)
    cc = critical_chi(n1, n2)
    gap = chi > cc * (1 + 1e-9)
    if np.any(gap):
        c, m1, m2 = chi[gap], n1[gap], n2[gap]
        slo, shi = spinodal(c, m1, m2)
        ulo_max = _logit(slo) - 1e-7
        uhi_min = _logit(shi) + 1e-7
        ua = np.minimum(-(1 - m1 / m2) - m1 * c, ulo_max)
        ub = np.maximum((1 - m2 / m1) + m2 * c, uhi_min)
        # near the critical point the dilute guess is poor: use the spinodal, pushed outwards
        near = (c / critical_chi(m1, m2)) < 1.5
        pc = critical_fraction(m1, m2)
        ua = np.where(near, _logit(np.clip(slo - (pc - slo), 1e-12, None)), ua)
        ub = np.where(near, _logit(np.clip(shi + (shi - pc), None, 1 - 1e-12)), ub)
        ua = np.minimum(ua, ulo_max)
        ub = np.maximum(ub, uhi_min)
        for _ in range(max_iter):
            # phi = expit(u): ln phi = -log(1 + e^-u), ln(1 - phi) = -log(1 + e^u)
            lpa, lqa = -np.logaddexp(0, -ua), -np.logaddexp(0, ua)
            lpb, lqb = -np.logaddexp(0, -ub), -np.logaddexp(0, ub)
            a_, qa = np.exp(lpa), np.exp(lqa)
            b_, qb = np.exp(lpb), np.exp(lqb)
            m1a, m2a = _mu(lpa, lqa, a_, qa, c, m1, m2)
            m1b, m2b = _mu(lpb, lqb, b_, qb, c, m1, m2)
            f1 = m1a - m1b
            f2 = m2a - m2b
            if np.all((np.abs(f1) < tol) & (np.abs(f2) < tol)):
                break
            # d mu / du = d mu / dphi * phi (1 - phi)
            d1a = (1.0 - (1 - m1 / m2) * a_ - 2 * m1 * c * qa * a_) * qa
            d2a = (-a_ + (1 - m2 / m1) * a_ * qa + 2 * m2 * c * a_ * a_ * qa)
            d1b = (1.0 - (1 - m1 / m2) * b_ - 2 * m1 * c * qb * b_) * qb
            d2b = (-b_ + (1 - m2 / m1) * b_ * qb + 2 * m2 * c * b_ * b_ * qb)
            # J = [[d1a, -d1b], [d2a, -d2b]]
            det = -d1a * d2b + d1b * d2a
            det = np.where(np.abs(det) < 1e-300, 1e-300, det)
            dua = (-f1 * -d2b - (-d1b) * -f2) / det
            dub = (d1a * -f2 - d2a * -f1) / det
            step = np.maximum(np.abs(dua), np.abs(dub))
            scale = np.where(step > 2.0, 2.0 / np.where(step > 0, step, 1), 1.0)
            ua = np.minimum(ua + scale * dua, ulo_max)
            ub = np.maximum(ub + scale * dub, uhi_min)
        pa[gap] = 1.0 / (1.0 + np.exp(-ua))
        pb[gap] = 1.0 / (1.0 + np.exp(-ub))
    return pa.reshape(shape), pb.reshape(shape)


def _binodal_scalar(chi: float, n1: float, n2: float, tol: float = 1e-12, max_iter: int = 100):
    """:func:`binodal` for one pair with plain floats (same method; fast path of miscibility)."""
    cc = 0.5 * (n1 ** -0.5 + n2 ** -0.5) ** 2
    if not chi > cc * (1 + 1e-9):
        return math.nan, math.nan
    lo, hi = (float(x) for x in spinodal(chi, n1, n2))
    ulo_max = math.log(lo) - math.log1p(-lo) - 1e-7
    uhi_min = math.log(hi) - math.log1p(-hi) + 1e-7
    if chi / cc < 1.5:
        pc = math.sqrt(n2) / (math.sqrt(n1) + math.sqrt(n2))
        a0 = max(lo - (pc - lo), 1e-12)
        b0 = min(hi + (hi - pc), 1 - 1e-12)
        ua, ub = math.log(a0) - math.log1p(-a0), math.log(b0) - math.log1p(-b0)
    else:
        ua, ub = -(1 - n1 / n2) - n1 * chi, (1 - n2 / n1) + n2 * chi
    ua, ub = min(ua, ulo_max), max(ub, uhi_min)

    def sp(x):  # log(1 + e^x), stable
        return x + math.log1p(math.exp(-x)) if x > 0 else math.log1p(math.exp(x))

    for _ in range(max_iter):
        lpa, lqa, lpb, lqb = -sp(-ua), -sp(ua), -sp(-ub), -sp(ub)
        a_, qa, b_, qb = math.exp(lpa), math.exp(lqa), math.exp(lpb), math.exp(lqb)
        f1 = (lpa + (1 - n1 / n2) * qa + n1 * chi * qa * qa) - (lpb + (1 - n1 / n2) * qb + n1 * chi * qb * qb)
        f2 = (lqa + (1 - n2 / n1) * a_ + n2 * chi * a_ * a_) - (lqb + (1 - n2 / n1) * b_ + n2 * chi * b_ * b_)
        if abs(f1) < tol and abs(f2) < tol:
            break
        d1a = (1.0 - (1 - n1 / n2) * a_ - 2 * n1 * chi * qa * a_) * qa
        d2a = -a_ + (1 - n2 / n1) * a_ * qa + 2 * n2 * chi * a_ * a_ * qa
        d1b = (1.0 - (1 - n1 / n2) * b_ - 2 * n1 * chi * qb * b_) * qb
        d2b = -b_ + (1 - n2 / n1) * b_ * qb + 2 * n2 * chi * b_ * b_ * qb
        det = -d1a * d2b + d1b * d2a
        if abs(det) < 1e-300:
            det = 1e-300
        dua = (f1 * d2b - d1b * f2) / det
        dub = (-d1a * f2 + d2a * f1) / det
        step = max(abs(dua), abs(dub))
        scale = 2.0 / step if step > 2.0 else 1.0
        ua = min(ua + scale * dua, ulo_max)
        ub = max(ub + scale * dub, uhi_min)
    return 1.0 / (1.0 + math.exp(-ua)), 1.0 / (1.0 + math.exp(-ub))


def volume_to_mole(phi, v1, v2):
    """Mole fraction of liquid 1 from its volume fraction phi and molar volumes V1, V2 (cm^3/mol)."""
    a = np.asarray(phi, float) / np.asarray(v1, float)
    b = (1.0 - np.asarray(phi, float)) / np.asarray(v2, float)
    return a / (a + b)


def mole_to_mass(x, m1, m2):
    """Mass fraction of liquid 1 from its mole fraction x and molar masses M1, M2 (g/mol)."""
    a = np.asarray(x, float) * np.asarray(m1, float)
    b = (1.0 - np.asarray(x, float)) * np.asarray(m2, float)
    return a / (a + b)


# ---------------------------------------------------------------- liquids

_NUM_FIELDS = ("delta_d", "delta_p", "delta_h", "molar_volume")


def _shared_library() -> pd.DataFrame:
    """The bundled library frame itself (read only here; saves a copy per call)."""
    from .library import _bundled

    return _bundled()


def _liquid(obj, lib) -> dict:
    """A liquid as a plain record; library name/CAS/SMILES or a user dict/Series."""
    if isinstance(obj, str):
        if lib is None:
            lib = _shared_library()
        row = lib.iloc[locate(obj, lib)]
        return _record(row, str(row["name"]))
    if isinstance(obj, (dict, pd.Series)):
        return _record(obj, str(obj.get("name", "user liquid")))
    raise SelectorError(f"a liquid must be a name/CAS/SMILES or a dict/Series with delta_d, delta_p, "
                        f"delta_h and molar_volume; got {type(obj).__name__}")


def _num(v, what, name, lo=None):
    if v is None or isinstance(v, bool) or isinstance(v, str) and not v.strip():
        raise SelectorError(f"{name}: {what} is missing")
    try:
        f = float(v)
    except (TypeError, ValueError):
        raise SelectorError(f"{name}: {what} must be a number, got {v!r}") from None
    if not math.isfinite(f):
        if math.isnan(f):
            hint = (": miscibility needs it; add it to your liquids file (`likewise guess SMILES` "
                    "estimates one)" if what.startswith("molar_volume") else "")
            raise SelectorError(f"{name}: {what} is missing{hint}")
        raise SelectorError(f"{name}: {what} must be a finite number, got {f:g}")
    if lo is not None and f < lo:
        raise SelectorError(f"{name}: {what} must not be below {lo:g}, got {f:g}")
    return f


def _opt(v):
    try:
        f = float(v)
    except (TypeError, ValueError):
        return math.nan
    return f


def _clean(v) -> str:
    """A text field of a row: "" for None or NaN, else the text without surrounding spaces."""
    return "" if v is None or (isinstance(v, float) and math.isnan(v)) or v is pd.NA else str(v).strip()


def key_and_mass(row) -> tuple[str, float]:
    """``(InChIKey, molar mass g/mol)`` of a liquid row (dict or Series) for the UNIFAC second
    opinion: the row's own values where given, else from its SMILES (RDKit); ``""`` / NaN when
    neither is there."""
    from .chem import inchikey, molar_mass

    get = row.get
    smi = _clean(get("smiles", ""))
    key = _clean(get("inchikey", "")) or ((inchikey(smi) or "") if smi else "")
    try:
        mm = float(get("molar_mass", math.nan))
    except (TypeError, ValueError):
        mm = math.nan
    if not math.isfinite(mm) and smi:
        mm = molar_mass(smi)
    return key, mm


def second_opinion_of(a, b, t: float) -> dict:
    """UNIFAC's second opinion (:func:`selector.unifac.second_opinion`) for two liquid rows at
    ``t`` (C), or ``{}`` when one lacks a structure or molar mass, or both are the same compound."""
    from .unifac import second_opinion

    (ka, ma), (kb, mb) = key_and_mass(a), key_and_mass(b)
    if not ka or not kb or ka == kb or not (math.isfinite(ma) and math.isfinite(mb)):
        return {}
    return second_opinion(ka, kb, ma, mb, float(t))


def _record(row, name) -> dict:
    get = row.get
    rec = {"name": name}
    for k in ("delta_d", "delta_p", "delta_h"):
        rec[k] = _num(get(k), k + " (MPa^0.5)", name, 0.0)
    if rec["delta_d"] <= 0:
        raise SelectorError(f"{name}: delta_d must be positive")
    rec["molar_volume"] = _num(get("molar_volume"), "molar_volume (cm3/mol)", name, 0.0)
    if rec["molar_volume"] <= 0:
        raise SelectorError(f"{name}: molar_volume must be positive (cm3/mol)")
    rec["molar_mass"] = _opt(get("molar_mass"))
    rec["melting_point_c"] = _opt(get("melting_point_c"))
    rec["boiling_point_c"] = _opt(get("boiling_point_c"))
    rec["expansion_coeff"] = _opt(get("expansion_coeff"))
    rec["smiles"] = _clean(get("smiles", ""))
    if rec["smiles"] and math.isnan(site_counts(rec["smiles"])[0]):
        raise SelectorError(f"{name}: {rec['smiles']!r} is not a valid SMILES string")
    rec["inchikey"] = _clean(get("inchikey", ""))
    if not rec["inchikey"] and rec["smiles"]:
        from .chem import inchikey

        rec["inchikey"] = inchikey(rec["smiles"]) or ""
    rec["sources_disagree"] = str(get("sources_disagree", False)).lower() == "true"
    rec["origin"] = str(get("origin", "") or "")
    rec["cas"] = _clean(get("cas", ""))
    rec["hsp_source"] = str(get("hsp_source", "") or "")
    # 90 % intervals of an estimated liquid (delta_*_low/_high, molar_volume_low/_high), if any
    for k in _NUM_FIELDS:
        lo, hi = _opt(get(k + "_low")), _opt(get(k + "_high"))
        rec[k + "_range"] = (lo, hi) if math.isfinite(lo) and math.isfinite(hi) and lo <= hi else None
    from .cautions import row_reason

    rec["reactive_reason"] = row_reason(row)
    return rec


def _frame(records) -> pd.DataFrame:
    return pd.DataFrame(records)


def _check_temperature(t, recs):
    from .filters import check_temperature

    t = check_temperature(t)
    for r in recs:
        mp, bp = r["melting_point_c"], r["boiling_point_c"]
        if math.isfinite(mp) and t < mp:
            raise SelectorError(f"{r['name']} is solid at {t:g} C (melting point {mp:g} C): "
                                "miscibility is defined for liquids only")
        if math.isfinite(bp) and t > bp:
            raise SelectorError(f"{r['name']} boils at {bp:g} C, below {t:g} C: outside its liquid "
                                "range at atmospheric pressure")
    return t


def _check_temperature_frame(t, df):
    from .filters import check_temperature

    t = check_temperature(t)
    mp = pd.to_numeric(df.get("melting_point_c", pd.Series(np.nan, index=df.index)), errors="coerce").to_numpy(float)
    bp = pd.to_numeric(df.get("boiling_point_c", pd.Series(np.nan, index=df.index)), errors="coerce").to_numpy(float)
    bad = (np.isfinite(mp) & (t < mp)) | (np.isfinite(bp) & (t > bp))
    if np.any(bad):
        names = df["name"].astype(str).to_numpy()[bad] if "name" in df.columns else np.arange(len(df))[bad]
        shown = ", ".join(map(str, names[:8])) + (" ..." if bad.sum() > 8 else "")
        n = int(bad.sum())
        raise SelectorError(f"{plural(n, 'liquid')} {'is' if n == 1 else 'are'} not liquid at {t:g} C (below melting or "
                            f"above boiling point): {shown}")
    return t


# ---------------------------------------------------------------- LCST note

def _lcst_prone(rec) -> bool:
    """Water + amine/glycol-ether type partners show lower critical behaviour (common practice)."""
    return _lcst_prone_smiles(rec["smiles"])


@functools.lru_cache(maxsize=1024)
def _lcst_prone_smiles(smi: str) -> bool:
    if not smi:
        return False
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smi)
    if mol is None:
        return False
    amine = Chem.MolFromSmarts("[NX3;!$(N[#6,#16]=[O,S,N]);!$(Na);!$(N~[O,N])]")
    pyr = Chem.MolFromSmarts("[nX2]")
    # a hydroxyl two saturated carbons from an ether oxygen: 2-alkoxyethanols and the
    # 1-alkoxy-2-propanols alike (1-methoxy-2-propanol carries its OH on the CH)
    glycol_ether = Chem.MolFromSmarts("[OX2H][CX4][CX4][OX2][#6]")
    return (mol.HasSubstructMatch(amine) or mol.HasSubstructMatch(pyr)
            or mol.HasSubstructMatch(glycol_ether))


def _is_water(rec) -> bool:
    return rec["smiles"] in ("O", "[OH2]") or rec["name"].lower() == "water"


# ---------------------------------------------------------------- results

@dataclass
class Miscibility:
    """Result of :func:`miscibility` for one pair at one temperature.

    ``chi``: Flory-Huggins parameter per reference volume ``v_ref`` (cm^3/mol, the smaller
    molar volume); ``chi_critical``: its critical value; ``ucst_c``: upper critical solution
    temperature in C (None when the model has none); ``lcst_c``: lower critical solution
    temperature in C, where a gap opens on heating (None when the model has none); ``binodal``: coexisting compositions (a
    dict of phases with vol %, wt % and mole % of liquid ``a``, and the mutual solubilities), or
    None when miscible; ``spinodal``: (low, high) volume fractions of ``a`` or None;
    ``confidence``: "high", "medium" or "low"; ``p_miscible``: probability of one phase in all
    proportions from the logistic model fitted on the reference pairs at 25 C (NaN for a model
    without one); ``notes``: list of plain-language remarks; ``lcst_prone``: water with an amine,
    pyridine or glycol ether, a pair whose gap opens on heating in practice, so that the model's
    UCST trend does not apply to it; ``reacts``: why the two react with each other (an acid and an
    amine, ...; :data:`selector.cautions.PAIR_RULES`), "" when no rule applies; ``second_opinion``:
    UNIFAC's state (:func:`selector.unifac.second_opinion`: ``method``, ``state``, ``why``;
    ``state`` "" where UNIFAC does not cover the pair); ``models_disagree``: UNIFAC and this model
    differ on one phase or two; ``reference``: within :data:`REFERENCE_WINDOW_C` of 25 C (and no
    recorded critical temperature in between), the pair's entry in ``parameters/miscibility_pairs.csv``
    or ``miscibility_facts.csv`` (``state``, ``source``, ``table``) where it has one, which then
    gives the answer (:attr:`headline`) ahead of both models.
    """

    a: str
    b: str
    temperature_c: float
    state: str
    chi: float
    chi_critical: float
    ucst_c: float | None
    binodal: dict | None
    spinodal: tuple | None
    confidence: str
    notes: list = field(default_factory=list)
    v_ref: float = math.nan
    interaction_mpa: float = math.nan
    model: str = ""
    lcst_c: float | None = None
    p_miscible: float = math.nan
    lcst_prone: bool = False
    reacts: str = ""
    trend_doubtful: bool = False
    second_opinion: dict = field(default_factory=dict)
    models_disagree: bool = False
    reference: dict = field(default_factory=dict)

    @property
    def answer(self) -> str:
        """The state to act on: the recorded one where the reference data answer (:attr:`reference`),
        else the model's :attr:`state`."""
        return self.reference["state"] if self.reference else self.state

    @property
    def miscible(self) -> bool:
        """One phase in all proportions, by :attr:`answer`."""
        return self.answer == "miscible"

    @property
    def reference_contradicts(self) -> bool:
        """The reference data answer and say one phase where the model says two, or the reverse:
        the model's own numbers (chi, UCST, gap, solubilities) are then its error."""
        return bool(self.reference) and _one_phase_differs(self.reference["state"], self.state)

    @property
    def headline(self) -> str:
        """The state as an answer to show first: ``state``, except for an LCST-prone pair (water with
        an amine, pyridine or glycol ether), where the model is not to be trusted either way
        (water and 1-methoxy-2-propanol mix in all proportions at 25 C, water and triethylamine
        split; from memory), or a water pair whose model state at this temperature differs from its
        state at 25 C (``trend_doubtful``), or a pair on which UNIFAC says otherwise
        (``models_disagree``): "uncertain (model: <state>)", with UNIFAC's state beside it where it
        has one; with ", but they react" appended for a pair of :data:`selector.cautions.PAIR_RULES`
        (``reacts`` names the reaction)."""
        if self.reference:
            head = f"{self.reference['state']} (reference data)"
            return f"{head}, but they react" if self.reacts else head
        doubt = self.lcst_prone or self.trend_doubtful or self.models_disagree
        second = self.second_opinion.get("state", "") if self.second_opinion else ""
        other = f"; {self.second_opinion['method']}: {second}" if second and second != self.state else ""
        head = f"uncertain (model: {self.state}{other})" if doubt else self.state
        return f"{head}, but they react" if self.reacts else head

    def as_dict(self) -> dict:
        d = {k: getattr(self, k) for k in ("a", "b", "temperature_c", "state", "chi", "chi_critical",
                                           "ucst_c", "lcst_c", "confidence", "p_miscible", "v_ref", "interaction_mpa",
                                           "model", "lcst_prone", "trend_doubtful", "reacts", "headline",
                                           "models_disagree", "answer", "reference_contradicts")}
        d["second_opinion"] = dict(self.second_opinion or {})
        d["reference"] = dict(self.reference or {})
        d["spinodal"] = None if self.spinodal is None else list(self.spinodal)
        d["binodal"] = self.binodal
        d["notes"] = list(self.notes)
        return d


def hsp_at(hsp, expansion, t_c):
    """HSP at ``t_c`` (C) by the Hansen-Beerbower relations (:func:`selector.hansen.hsp_at_temperature`);
    a missing expansion coefficient is taken as :data:`DEFAULT_EXPANSION`."""
    from .hansen import hsp_at_temperature

    al = np.asarray(expansion, float)
    al = np.where(np.isfinite(al), al, DEFAULT_EXPANSION)
    return hsp_at_temperature(hsp, al, t_c)


def volume_at(v, expansion, t_c):
    """Molar volume (cm^3/mol) at ``t_c`` (C) from the 25 C value: V exp(alpha (t - 25)).

    A missing expansion coefficient alpha (1/K) is taken as :data:`DEFAULT_EXPANSION`.
    """
    al = np.asarray(expansion, float)
    al = np.where(np.isfinite(al), al, DEFAULT_EXPANSION)
    return np.asarray(v, float) * np.exp(al * (np.asarray(t_c, float) - 25.0))


def _compute(h1, h2, s1, s2, v1, v2, t_c, model, al1=np.nan, al2=np.nan, moved=False):
    """Vectorised core: interaction, chi, chi_c and the binodal for arrays of pairs at t_c (C).

    HSP and molar volumes are moved to t_c (:func:`hsp_at`, :func:`volume_at`) unless ``moved``
    says they already are; the site strengths are kept at their 25 C values."""
    if t_c != 25.0 and not moved:
        h1, h2 = hsp_at(h1, al1, t_c), hsp_at(h2, al2, t_c)
        v1, v2 = volume_at(v1, al1, t_c), volume_at(v2, al2, t_c)
    a12 = model.interaction(h1, h2, s1, s2, t_c)
    e1, e2 = model.entropy_volume(v1, s1), model.entropy_volume(v2, s2)
    vr = np.minimum(e1, e2)
    n1, n2 = e1 / vr, e2 / vr
    chi = model.chi(a12, vr, s1, s2, t_c)
    cc = critical_chi(n1, n2)
    pa, pb = binodal(chi, n1, n2)
    return a12, vr, n1, n2, chi, cc, pa, pb


def _polyol_factor(model, sites) -> float:
    s = np.asarray(sites, float)
    if not model.polyol_c or s.shape[-1] < 4:
        return 1.0
    return 1.0 + model.polyol_c * float(np.nan_to_num(s[..., 3], nan=0.0))


def _critical_scalar(h1, h2, s1, s2, v1, v2, model, al1, al2, lo=-150.0, hi=400.0):
    """(UCST, LCST) in C for one pair with plain floats (fast path of :func:`miscibility`).

    g(T) = chi(T) - chi_c(T) is scanned on [lo, hi] in 5 K steps and each sign change refined by
    bisection. UCST: the highest T where the gap closes on heating (g from > 0 to < 0); +inf if
    the gap is still open at ``hi``; NaN if no gap closes on heating. LCST: the lowest T where a
    gap opens on heating (g from < 0 to > 0), which only the cross hydrogen-bond term can give;
    NaN if none.
    """
    al1 = float(al1) if math.isfinite(float(al1)) else DEFAULT_EXPANSION
    al2 = float(al2) if math.isfinite(float(al2)) else DEFAULT_EXPANSION
    k1 = (1.25 * al1, 0.5 * al1, 1.22e-3 + 0.5 * al1)
    k2 = (1.25 * al2, 0.5 * al2, 1.22e-3 + 0.5 * al2)
    r1 = float(model.split_ratio(np.asarray(s1, float)))
    r2 = float(model.split_ratio(np.asarray(s2, float)))
    wp = model.w_p * float(model.induction(np.asarray(s1, float)) * model.induction(np.asarray(s2, float))) ** 2
    g1, g2 = _polyol_factor(model, s1), _polyol_factor(model, s2)
    h1 = [float(x) for x in h1]
    h2 = [float(x) for x in h2]
    x = 0.0
    if model.assoc_z:
        a1, b1 = (float(np.nan_to_num(s1[k])) for k in (4, 5))
        a2, b2 = (float(np.nan_to_num(s2[k])) for k in (4, 5))
        x = max(-(a1 - a2) * (b1 - b2), 0.0) * ASSOC_ENERGY / R_GAS

    def f(t):
        dt = t - 25.0
        d0 = h1[0] * math.exp(-k1[0] * dt) - h2[0] * math.exp(-k2[0] * dt)
        d1 = h1[1] * math.exp(-k1[1] * dt) - h2[1] * math.exp(-k2[1] * dt)
        x1 = h1[2] * math.exp(-k1[2] * dt)
        x2 = h2[2] * math.exp(-k2[2] * dt)
        a = (model.w_d * d0 * d0 + wp * float(model.keesom_factor(t)) * d1 * d1
             + model.w_h * (x1 * r1 - x2 * r2) * (x1 / r1 - x2 / r2))
        e1 = max(v1 * math.exp(al1 * dt) * g1, model.v_min)
        e2 = max(v2 * math.exp(al2 * dt) * g2, model.v_min)
        vr = min(e1, e2)
        cc = 0.5 * ((e1 / vr) ** -0.5 + (e2 / vr) ** -0.5) ** 2
        tk = t + 273.15
        chi = vr * a / (R_GAS * tk)
        if x:
            q = min(ASSOC_K0 * 1000.0 / (model.assoc_z * vr), 1.0)
            chi -= math.log1p(q * math.expm1(x / tk))
        return chi - cc

    def root(a, b, fa):
        for _ in range(40):
            m = 0.5 * (a + b)
            if (f(m) > 0) == (fa > 0):
                a = m
            else:
                b = m
        return 0.5 * (a + b)

    n = int(round((hi - lo) / 5.0))
    ts = [lo + (hi - lo) * i / n for i in range(n + 1)]
    gs = [f(t) for t in ts]
    ucst_c = lcst_c = math.nan
    for i in range(n):
        ga, gb = gs[i], gs[i + 1]
        if ga > 0 >= gb:
            ucst_c = root(ts[i], ts[i + 1], ga)        # keep the highest
        elif ga <= 0 < gb and math.isnan(lcst_c):
            lcst_c = root(ts[i], ts[i + 1], ga)        # keep the lowest
    if gs[-1] > 0:
        ucst_c = math.inf
    return ucst_c, lcst_c


def ucst(h1, h2, s1, s2, v1, v2, model, al1=np.nan, al2=np.nan, lo=-150.0, hi=400.0):
    """Upper critical solution temperature (C) of pairs: the T where chi(T) = chi_c.

    chi(T) = V_r(T) A12(T) / (R T) with the HSP at T from the Hansen-Beerbower relations and the
    molar volumes at T (:func:`volume_at`); solved by vectorised bisection on [lo, hi] C. NaN
    where chi < chi_c over the whole range (no UCST there); +inf where the gap stays open up to
    ``hi``.
    """
    args = np.broadcast_arrays(np.asarray(v1, float), np.asarray(v2, float))
    shape = args[0].shape

    def f(t):
        a = model.interaction(hsp_at(h1, al1, t), hsp_at(h2, al2, t), s1, s2, t)
        e1 = model.entropy_volume(volume_at(v1, al1, t), s1)
        e2 = model.entropy_volume(volume_at(v2, al2, t), s2)
        vr = np.minimum(e1, e2)
        return model.chi(a, vr, s1, s2, t) - critical_chi(e1 / vr, e2 / vr)

    a = np.full(shape, lo)
    b = np.full(shape, hi)
    fa, fb = f(a), f(b)
    for _ in range(40):
        m = 0.5 * (a + b)
        fm = f(m)
        left = fm < 0          # chi falls with T: the root is below m when f(m) < 0
        b = np.where(left, m, b)
        a = np.where(left, a, m)
    root = 0.5 * (a + b)
    out = np.where(fa < 0, np.nan, np.where(fb > 0, np.inf, root))
    return out


def _classify(pa, pb, v1, v2, m1, m2):
    """States from binodal fractions; mutual solubilities in wt % (NaN molar mass: vol %)."""
    gap = np.isfinite(pa)
    x_a = volume_to_mole(np.where(gap, pa, 0.5), v1, v2)
    x_b = volume_to_mole(np.where(gap, pb, 0.5), v1, v2)
    mm_ok = np.isfinite(m1) & np.isfinite(m2)
    w_a = np.where(mm_ok, mole_to_mass(x_a, np.where(mm_ok, m1, 1), np.where(mm_ok, m2, 1)), pa)
    w_b = np.where(mm_ok, mole_to_mass(x_b, np.where(mm_ok, m1, 1), np.where(mm_ok, m2, 1)), pb)
    sol_1_in_2 = 100 * w_a          # wt % of liquid 1 in the phase rich in 2
    sol_2_in_1 = 100 * (1 - w_b)    # wt % of liquid 2 in the phase rich in 1
    immisc = gap & (np.minimum(sol_1_in_2, sol_2_in_1) < IMMISCIBLE_BELOW_WT_PCT)
    state = np.where(~gap, "miscible", np.where(immisc, "immiscible", "partially miscible"))
    return state


def miscibility(a, b, *, temperature: float = 25.0, library: pd.DataFrame | None = None,
                model=None, unifac: bool = True, reference: bool = True) -> Miscibility:
    """Whether liquids ``a`` and ``b`` mix at ``temperature`` (C), with chi, UCST and binodal.

    ``a``, ``b``: library names/CAS/SMILES, or dicts/Series with ``delta_d, delta_p, delta_h``
    (MPa^0.5), ``molar_volume`` (cm^3/mol) and optionally ``smiles``, ``molar_mass`` (g/mol),
    ``melting_point_c``, ``boiling_point_c`` (C) and ``expansion_coeff`` (1/K). ``model``:
    "hbond" (default) or "plain". Method: see the module docstring (Flory-Huggins with Hansen
    parameters and a donor/acceptor term; HSP moved to the temperature by Hansen-Beerbower).
    The result is symmetric in ``a`` and ``b`` (the binodal is given for ``a``). With ``unifac``
    (default), UNIFAC's phase split at the same temperature is worked out as a second opinion
    (:mod:`selector.unifac`: Dortmund where it covers the pair, else the original); where it
    disagrees on one phase or two, the answer is "uncertain" and the confidence low. With
    ``reference`` (default), a pair of ``parameters/miscibility_pairs.csv`` or
    ``miscibility_facts.csv`` answers with its recorded 25 C state within
    :data:`REFERENCE_WINDOW_C` of 25 C (:attr:`Miscibility.reference`); ``reference=False`` gives
    the models' answer alone (how the accuracy report scores them).

    >>> r = miscibility("water", "hexane")
    >>> r.state, r.chi > r.chi_critical
    ('immiscible', True)
    >>> miscibility("water", "ethanol").state
    'miscible'
    """
    mdl = _model(model)
    lib = library
    if (isinstance(a, str) or isinstance(b, str)) and lib is None:
        lib = _shared_library()
    ra_, rb_ = _liquid(a, lib), _liquid(b, lib)
    t = _check_temperature(temperature, [ra_, rb_])
    h1 = np.array([ra_["delta_d"], ra_["delta_p"], ra_["delta_h"]])
    h2 = np.array([rb_["delta_d"], rb_["delta_p"], rb_["delta_h"]])
    v1, v2 = ra_["molar_volume"], rb_["molar_volume"]
    al1, al2 = ra_["expansion_coeff"], rb_["expansion_coeff"]
    s = site_strengths([ra_["smiles"], rb_["smiles"]])
    if t != 25.0:
        h1, h2 = hsp_at(h1, al1, t), hsp_at(h2, al2, t)
        v1t, v2t = float(volume_at(v1, al1, t)), float(volume_at(v2, al2, t))
    else:
        v1t, v2t = v1, v2
    a12 = float(mdl.interaction(h1, h2, s[0], s[1], t))
    e1, e2 = float(mdl.entropy_volume(v1t, s[0])), float(mdl.entropy_volume(v2t, s[1]))
    vr = min(e1, e2)
    n1, n2 = e1 / vr, e2 / vr
    chi = float(mdl.chi(a12, vr, s[0], s[1], t))
    cc = 0.5 * (n1 ** -0.5 + n2 ** -0.5) ** 2
    pa, pb = _binodal_scalar(chi, n1, n2)
    h1 = np.array([ra_["delta_d"], ra_["delta_p"], ra_["delta_h"]])
    h2 = np.array([rb_["delta_d"], rb_["delta_p"], rb_["delta_h"]])
    m1, m2 = ra_["molar_mass"], rb_["molar_mass"]
    state = str(_classify(np.array(pa), np.array(pb), v1t, v2t, m1, m2))
    notes = []
    u, lc = _critical_scalar(h1, h2, s[0], s[1], v1, v2, mdl, al1, al2)
    ucst_c = u if math.isfinite(u) else None
    bp_low = min((x for x in (ra_["boiling_point_c"], rb_["boiling_point_c"]) if math.isfinite(x)), default=math.inf)
    lcst_c = lc if math.isfinite(lc) and lc < bp_low else None   # above a boiling point: moot
    spin = bino = None
    if math.isfinite(pa):
        lo, hi = spinodal(chi, n1, n2)
        spin = (float(lo), float(hi))
        bino = _binodal_dict(pa, pb, v1t, v2t, m1, m2)
    wa, wb = _is_water(ra_), _is_water(rb_)
    # water with an amine, pyridine or glycol ether: the model's own temperature trend (a UCST, a
    # gap narrowing on heating) is the opposite of what such pairs do, so its UCST notes would
    # mislead; the LCST note below replaces them
    lcst = (wa != wb) and _lcst_prone(rb_ if wa else ra_)
    if not lcst:
        if ucst_c is not None:
            if ucst_c < t:
                notes.append(f"model UCST {ucst_c:.0f} C, below {t:g} C: one phase here; a gap may open "
                             "on cooling")
            else:
                notes.append(f"model UCST {ucst_c:.0f} C: the gap narrows on heating and closes there")
            if math.isfinite(bp_low) and ucst_c > bp_low:
                notes.append("the UCST lies above a boiling point: at atmospheric pressure the gap "
                             "does not close before the mixture boils")
        elif math.isinf(u):
            notes.append("the gap stays open up to 400 C in this model")
        elif lcst_c is None:
            notes.append("no UCST in this model: one phase at every temperature where both are liquid")
    if lcst_c is not None:
        where = "below" if lcst_c < t else "above"
        notes.append(f"model LCST {lcst_c:.0f} C ({where} {t:g} C): cross hydrogen bonds hold the pair "
                     "together when cold and let go on heating, so a gap opens above it")
    for r in (ra_, rb_):
        if r.get("reactive_reason"):
            notes.insert(0, f"{r['name']} is a reagent, not a solvent ({r['reactive_reason']}): it may react "
                         "with the other liquid instead of mixing, which this model cannot tell; read its "
                         "safety data sheet before any contact")
    if (wa or wb) and ucst_c is not None and not lcst:
        notes.append("with water the model UCST is only a rough hint (water-1-butanol: model about "
                     "27 C, published about 125 C)")
    if (wa != wb) and bino is not None:
        notes.append("the mutual solubilities are rough, often off by a factor of ten or more in either "
                     "phase (water in ethyl acetate: model about 30 wt %, measured about 3 wt %; "
                     "1-butanol in water: model about 28 wt %, measured about 7.7 wt %; from memory)")
    if lcst:
        notes.append("water with an amine, pyridine or glycol ether: such pairs can show lower "
                     "critical solution behaviour - one phase when cold, a gap that opens on heating "
                     "(water-triethylamine: miscible below about 19 C, from memory). This model only "
                     "knows gaps that close on heating, so its temperature trend (and any model UCST) "
                     "does not apply here: test the mix at the temperatures of use")
    doubtful = False
    if (wa != wb) and not lcst and abs(t - 25.0) > 1e-9:
        # the model's temperature trend with water is rough (water-ethyl acetate: miscible above about
        # 51 C in the model, two phases up to boiling in practice; common practice): a state that
        # differs from the model's own state at 25 C is not an answer
        try:
            st25 = miscibility(a, b, temperature=25.0, library=library, model=model, unifac=False,
                               reference=False).state
        except SelectorError:
            st25 = state
        if st25 != state:
            doubtful = True
            notes.append(f"with water the model's temperature trend is unreliable: it says {state} at {t:g} C "
                         f"but {st25} at 25 C (water-ethyl acetate: model miscible above about 51 C, two "
                         "phases up to boiling in practice; common practice); test the mix at the "
                         "temperature of use")
    conf = _confidence(chi, cc, ra_, rb_, lcst, notes)
    if doubtful:
        conf = "low"
    for r in (ra_, rb_):
        if r["origin"] == "estimated":
            notes.append(f"{r['name']}: HSP and molar volume estimated from structure, not measured")
        elif r["origin"] == "published":
            notes.append(f"{r['name']}: molar volume estimated from structure (HSP published, {r['hsp_source']})")
    found = corner_states(ra_, rb_, s, t, mdl)
    if found is not None and len(set(found) | {state}) > 1:
        conf = "low"
        which = " and ".join(r["name"] for r in (ra_, rb_) if _ranges(r) is not None)
        notes.append(f"within the 90 % intervals of {which} the state can be "
                     + ", ".join(sorted(set(found) | {state})) + " (states at the corners of the intervals)")
    same = ra_["name"] == rb_["name"] and np.allclose(h1, h2) and v1 == v2
    if same:
        notes = [n for n in notes[:1] if "is a reagent, not a solvent" in n] + [
            "the same liquid on both sides: it forms one phase with itself, there is nothing to predict"]
    else:
        notes.append("a model estimate: confirm with a small test mix, and read the safety data sheets "
                     "of both liquids first")
    second, disagree = {}, False
    if unifac and not same:
        from .unifac import second_opinion

        mm = [key_and_mass(r)[1] for r in (ra_, rb_)]
        lacking = [r["name"] for r, m_ in zip((ra_, rb_), mm) if not math.isfinite(m_)]
        second = second_opinion(ra_["inchikey"], rb_["inchikey"], mm[0], mm[1], t) if not lacking else {
            "method": "", "state": "", "why": f"no molar mass or structure for {' and '.join(lacking)}"}
        if second["state"]:
            disagree = _one_phase_differs(second["state"], state)
            if disagree:
                conf = "low"
                notes.insert(0, f"second opinion: {second['method']}, with the parameters and groups thermo "
                             f"carries, says {second['state']} at {t:g} C, this model {state}: the two disagree, "
                             "so test a small mix before relying on either")
            else:
                notes.append(f"second opinion: {second['method']}, as thermo carries it, also says "
                             f"{'one phase' if state == 'miscible' else 'two phases'} ({second['state']})")
        else:
            notes.append(f"no UNIFAC second opinion for this pair ({second['why']})")
    ref, entry = (_reference_at(ra_.get("cas", ""), rb_.get("cas", ""), t) if reference and not same
                  else ({}, {}))
    if ref.get("state") == NOT_MISCIBLE:
        ref = dict(ref, state=resolve_recorded(NOT_MISCIBLE, state), recorded=NOT_MISCIBLE)
        ref["source"] = (f"{ref['source']}; the record says only 'not miscible', so the kind of split "
                         "shown is the model's")
    at25 = ("at 25 C" if abs(t - 25.0) < 1e-9 else
            ref.get("basis", f"at 25 C, which holds at {t:g} C too (within {REFERENCE_WINDOW_C:g} C)"))
    if ref:
        conf = "high"
        if _one_phase_differs(ref["state"], state):
            # the model's own account (its UCST, its gap, its solubilities) contradicts the answer
            notes[:] = [n for n in notes if not n.startswith(MODEL_NOTE_PREFIXES)]
            notes.insert(0, f"reference data ({ref['source']}) say {ref['state']} {at25}, and that is the "
                         f"answer; this model says {state}, one of the recorded pairs it gets wrong, so its "
                         "numbers here (chi, UCST, solubilities) are its own and not to be trusted")
        else:
            notes.insert(0, f"reference data ({ref['source']}) agree: {ref['state']} {at25}")
        notes[:] = [n.replace(", so test a small mix before relying on either", "; the reference data decide here")
                    for n in notes]
    elif entry:
        notes.insert(0, f"at 25 C the reference data say {entry['state']} ({entry['source']}); at {t:g} C the "
                     "answer is the models'")
    from .cautions import pair_reasons

    reacts = "; ".join(w.split(": ", 1)[1] for w in pair_reasons(
        pd.DataFrame({"name": [ra_["name"], rb_["name"]], "smiles": [ra_.get("smiles", ""), rb_.get("smiles", "")]})))
    if reacts:
        notes.insert(0, f"REACTIVE PAIR - {reacts}: whatever the phase behaviour, do not mix them except as "
                        "a planned reaction; read both safety data sheets")
    return Miscibility(ra_["name"], rb_["name"], t, state, chi, cc, ucst_c, bino, spin,
                       conf, notes, float(vr), a12, mdl.name, lcst_c, mdl.p_miscible(chi, cc), bool(lcst),
                       reacts, doubtful, second, bool(disagree), ref)


def _one_phase_differs(state_a: str, state_b: str) -> bool:
    """Two answers differ on one phase in all proportions or not (partially miscible and
    immiscible both mean "not")."""
    return (state_a == "miscible") != (state_b == "miscible")


#: Notes that describe the model's own phase behaviour (dropped where the reference data say otherwise).
MODEL_NOTE_PREFIXES = ("model UCST", "the UCST lies above", "the gap stays open", "no UCST in this model",
                       "model LCST", "with water the model UCST", "the mutual solubilities are rough")


@functools.lru_cache(maxsize=1)
def _reference_pairs() -> dict:
    from .mixing_fit import FACTS_CSV, PAIRS_CSV, load_pairs

    out = {}
    for path in (PAIRS_CSV, FACTS_CSV):
        if not path.exists():
            continue
        for r in load_pairs(path).itertuples():
            state = r.state_25c
            if state not in STATES:
                # an entry that says only "not miscible" (ethylene glycol + chloroform, DMSO + hexane)
                # still answers whether the pair is one phase: NOT_MISCIBLE, resolved against the
                # model's state where it is used (:func:`resolve_recorded`)
                if str(r.miscible_25c).strip().lower() != "no":
                    continue
                state = NOT_MISCIBLE
            crit = [(float(v), kind) for v, kind in ((r.ucst_c, "UCST"), (r.lcst_c, "LCST")) if v == v]
            out.setdefault(frozenset((r.cas_a, r.cas_b)), {"state": state, "source": r.source,
                                                           "table": path.name, "critical_c": crit})
    return out


#: The recorded "state" of a reference entry that says only "not miscible" (two phases at 25 C,
#: partial or near-complete immiscibility not recorded).
NOT_MISCIBLE = "not miscible"


def resolve_recorded(recorded: str, model_state: str) -> str:
    """The state to show for a recorded one: the record itself, except for :data:`NOT_MISCIBLE`,
    which keeps the model's split state (partially miscible or immiscible) and turns the model's
    "miscible" into "partially miscible" (the mildest split state).

    >>> resolve_recorded("not miscible", "miscible"), resolve_recorded("not miscible", "immiscible")
    ('partially miscible', 'immiscible')
    """
    if recorded != NOT_MISCIBLE:
        return recorded
    return "partially miscible" if model_state == "miscible" else model_state


def reference_state(cas_a: str, cas_b: str) -> dict:
    """The entry of ``parameters/miscibility_pairs.csv`` (the fitted reference pairs) or
    ``parameters/miscibility_facts.csv`` (check pairs, never fitted) for a pair of CAS numbers at
    25 C (``{"state", "source", "table"}``), or {} when the pair is in neither or the entry gives
    no state.

    >>> reference_state("7732-18-5", "110-54-3")["state"]    # water, hexane
    'immiscible'
    """
    return _reference_at(cas_a, cas_b, 25.0)[1]


#: A recorded 25 C state answers within this many degrees of 25 C (C), unless a recorded critical
#: solution temperature lies between 25 C and the temperature asked for.
REFERENCE_WINDOW_C = 5.0
#: With one recorded critical solution temperature, the record answers at any temperature at least
#: this many degrees (C) from it: one phase above a UCST and below an LCST, two on the other side.
CRITICAL_MARGIN_C = 3.0


def _reference_at(cas_a: str, cas_b: str, t: float) -> tuple[dict, dict]:
    """(answer, entry): the recorded state where it answers at ``t`` (C), and the entry itself
    (for a note at other temperatures); {} where there is none."""
    if not cas_a or not cas_b:
        return {}, {}
    rec = dict(_reference_pairs().get(frozenset((str(cas_a).strip(), str(cas_b).strip())), {}))
    if not rec:
        return {}, {}
    crit = rec.pop("critical_c", [])
    lo, hi = min(25.0, t), max(25.0, t)
    if abs(t - 25.0) <= REFERENCE_WINDOW_C and not any(lo <= c <= hi for c, _ in crit):
        return rec, rec
    if len(crit) == 1 and abs(t - crit[0][0]) >= CRITICAL_MARGIN_C:
        c, kind = crit[0]
        one_phase = (t > c) if kind == "UCST" else (t < c)
        side = f"{'above' if t > c else 'below'} the recorded {kind} of {c:g} C"
        if (t > c) == (25.0 > c):     # the same side as 25 C: the 25 C record holds
            return dict(rec, basis=f"at 25 C, which holds at {t:g} C too ({side})"), rec
        state = "miscible" if one_phase else "partially miscible"
        return dict(rec, state=state, basis=f"at {t:g} C, {side}"), rec
    return {}, rec


def reference_overlay(liquids: pd.DataFrame, temperature: float = 25.0) -> list[tuple[int, int, str]]:
    """``(i, j, state)`` for the pairs of ``liquids`` (rows with ``cas``) that the reference tables
    answer at ``temperature`` (C; :func:`_reference_at`), i < j; one pass over the recorded pairs."""
    if "cas" not in liquids.columns or len(liquids) < 2:
        return []
    cas = liquids["cas"].astype("string").fillna("").astype(str).str.strip().to_numpy()
    where: dict[str, list[int]] = {}
    for k, c in enumerate(cas):
        if c:
            where.setdefault(c, []).append(k)
    out = []
    for key in _reference_pairs():
        if len(key) != 2:
            continue
        a, b = tuple(key)
        if a not in where or b not in where:
            continue
        ref = _reference_at(a, b, float(temperature))[0]
        if ref:
            out += [(min(i, j), max(i, j), ref["state"]) for i in where[a] for j in where[b] if i != j]
    return sorted(out)


def _ranges(rec):
    """``(hsp choices (c, 3), volume choices (c,))`` at the corners of a liquid's 90 % intervals
    (the value itself where a quantity has none), or None when it carries no interval."""
    have = [rec.get(k + "_range") for k in _NUM_FIELDS]
    if not any(have):
        return None
    axes = [list(r) if r is not None else [rec[k]] for k, r in zip(_NUM_FIELDS, have)]
    grid = np.array(np.meshgrid(*axes, indexing="ij")).reshape(4, -1).T
    return grid[:, :3], grid[:, 3]


def corner_states(ra_, rb_, sites, t, mdl):
    """States of the pair at every combination of the corners of the liquids' 90 % intervals
    (HSP and molar volume; up to 16 x 16 combinations, one vectorised evaluation), or None when
    neither liquid carries intervals."""
    c1, c2 = _ranges(ra_), _ranges(rb_)
    if c1 is None and c2 is None:
        return None
    h1, v1 = c1 if c1 is not None else (np.array([[ra_[k] for k in _NUM_FIELDS[:3]]]), np.array([ra_["molar_volume"]]))
    h2, v2 = c2 if c2 is not None else (np.array([[rb_[k] for k in _NUM_FIELDS[:3]]]), np.array([rb_["molar_volume"]]))
    h1 = np.clip(h1, [1e-6, 0.0, 0.0], None)
    h2 = np.clip(h2, [1e-6, 0.0, 0.0], None)
    al1, al2 = ra_["expansion_coeff"], rb_["expansion_coeff"]
    s1, s2 = np.asarray(sites[0], float)[None, None, :], np.asarray(sites[1], float)[None, None, :]
    *_, pa, pb = _compute(h1[:, None, :], h2[None, :, :], s1, s2, v1[:, None], v2[None, :], t, mdl, al1, al2)
    st = _classify(pa, pb, volume_at(v1, al1, t)[:, None], volume_at(v2, al2, t)[None, :],
                   ra_["molar_mass"], rb_["molar_mass"])
    return np.unique(st).tolist()


#: Confidence bands on |ln(chi / chi_c)|: above the first "high", above the second "medium".
CONFIDENCE_BANDS = (0.4, 0.15)


def _confidence(chi, cc, ra_, rb_, lcst, notes) -> str:
    """"high" / "medium" / "low" from the distance to the phase boundary, lowered one step for
    disagreeing HSP sources or a missing structure, and "low" for LCST-prone pairs."""
    margin = abs(math.log(chi / cc)) if chi > 0 else math.inf
    level = 0 if margin > CONFIDENCE_BANDS[0] else (1 if margin > CONFIDENCE_BANDS[1] else 2)
    if ra_["sources_disagree"] or rb_["sources_disagree"]:
        notes.append("published HSP sources disagree by > 1 MPa^0.5 for at least one liquid")
        level += 1
    if not ra_["smiles"] or not rb_["smiles"]:
        notes.append("no structure (SMILES) for at least one liquid: donor/acceptor term left out")
        level += 1
    if lcst:
        level = 2
    return ("high", "medium", "low")[min(level, 2)]


def _binodal_dict(pa, pb, v1, v2, m1, m2) -> dict:
    """Binodal of a pair as fixed keys (a = first liquid, b = second).

    ``phi_a``: (lean, rich) volume fractions of a in the two phases (the Flory-Huggins
    composition variable; liquids with an entropy volume V* > V count as clusters of V* / V
    molecules of their real volume, so vol % and mole % use the real molar volumes);
    ``a_in_b`` and ``b_in_a``: the mutual solubilities (a in the b-rich phase, b in the
    a-rich phase) in vol %, wt % and mole %; wt % is NaN when a molar mass is missing.
    """
    xa, xb = float(volume_to_mole(pa, v1, v2)), float(volume_to_mole(pb, v1, v2))
    have_m = math.isfinite(m1) and math.isfinite(m2)
    wa = float(mole_to_mass(xa, m1, m2)) if have_m else math.nan
    wb = float(mole_to_mass(xb, m1, m2)) if have_m else math.nan
    return {
        "phi_a": (pa, pb),
        "a_in_b": {"vol_pct": 100 * pa, "wt_pct": 100 * wa, "mol_pct": 100 * xa},
        "b_in_a": {"vol_pct": 100 * (1 - pb), "wt_pct": 100 * (1 - wb), "mol_pct": 100 * (1 - xb)},
    }


# ---------------------------------------------------------------- matrices

def _arrays(df: pd.DataFrame):
    need = ["delta_d", "delta_p", "delta_h", "molar_volume"]
    miss = [c for c in need if c not in df.columns]
    if miss:
        raise SelectorError(f"liquids table lacks {'column' if len(miss) == 1 else 'columns'} {', '.join(miss)}")
    h = df[["delta_d", "delta_p", "delta_h"]].apply(pd.to_numeric, errors="coerce").to_numpy(float)
    v = pd.to_numeric(df["molar_volume"], errors="coerce").to_numpy(float)
    bad = ~np.isfinite(h).all(axis=1) | ~np.isfinite(v) | (v <= 0) | (h < 0).any(axis=1)
    if np.any(bad):
        names = df["name"].astype(str).to_numpy()[bad] if "name" in df.columns else np.flatnonzero(bad)
        no_v = bool((~np.isfinite(v[bad])).any())
        raise SelectorError("missing, negative or non-numeric HSP or molar volume for: "
                            + ", ".join(map(str, names[:8]))
                            + ("; miscibility (and so blends) needs each liquid's molar_volume in cm3/mol: add "
                               "it to your liquids file (`likewise guess SMILES` estimates one)" if no_v else ""))
    smi = df["smiles"].tolist() if "smiles" in df.columns else [""] * len(df)
    s = site_strengths(smi)
    m = (pd.to_numeric(df["molar_mass"], errors="coerce").to_numpy(float) if "molar_mass" in df.columns
         else np.full(len(df), np.nan))
    al = (pd.to_numeric(df["expansion_coeff"], errors="coerce").to_numpy(float)
          if "expansion_coeff" in df.columns else np.full(len(df), np.nan))
    return h, v, s, m, al


def _prepared(liquids: pd.DataFrame, temperature, model):
    """Model, checked temperature and per-liquid arrays (HSP and volume at that temperature)."""
    mdl = _model(model)
    if len(liquids) == 0:
        raise SelectorError("no liquids selected")
    t = _check_temperature_frame(temperature, liquids)
    h, v, s, m, al = _arrays(liquids)
    if t != 25.0:
        h, v = hsp_at(h, al, t), volume_at(v, al, t)
    return mdl, t, h, v, s, m


def state_matrix(liquids: pd.DataFrame, temperature: float = 25.0, model=None) -> np.ndarray:
    """(n, n) array of state strings for library-format rows (vectorised over all pairs)."""
    mdl, t, h, v, s, m = _prepared(liquids, temperature, model)
    a12, vr, n1, n2, chi, cc, pa, pb = _compute(
        h[:, None, :], h[None, :, :], s[:, None, :], s[None, :, :], v[:, None], v[None, :], t, mdl,
        moved=True)
    st = _classify(pa, pb, v[:, None], v[None, :], m[:, None], m[None, :])
    np.fill_diagonal(st, "miscible")
    return st


def miscible_pairs(liquids: pd.DataFrame, temperature: float = 25.0, model=None,
                   reference: bool = True) -> np.ndarray:
    """(n, n) bool array: True where the pair is miscible in all proportions.

    ``liquids``: library-format rows (``delta_d, delta_p, delta_h, molar_volume``, optionally
    ``smiles``); vectorised over all pairs; no phase-split solve is needed (chi <= chi_c). With
    ``reference`` (default) the pairs the reference tables answer at ``temperature`` take the
    recorded state (:func:`reference_overlay`), as :func:`miscibility` does, so that a blend never
    pairs what the pair answer calls partially miscible.

    >>> lib = load_library()
    >>> sel = lib[lib.name.isin(["water", "hexane", "acetone"])].sort_values("name")
    >>> miscible_pairs(sel).astype(int).tolist()   # acetone, hexane, water
    [[1, 1, 1], [1, 1, 0], [1, 0, 1]]
    """
    mdl, t, h, v, s, _ = _prepared(liquids, temperature, model)
    a12 = mdl.interaction(h[:, None, :], h[None, :, :], s[:, None, :], s[None, :, :], t)
    e = mdl.entropy_volume(v, s)
    vr = np.minimum(e[:, None], e[None, :])
    chi = mdl.chi(a12, vr, s[:, None, :], s[None, :, :], t)
    cc = critical_chi(e[:, None] / vr, e[None, :] / vr)
    out = chi <= cc
    if reference:
        for i, j, state in reference_overlay(liquids, t):
            out[i, j] = out[j, i] = state == "miscible"
    np.fill_diagonal(out, True)
    return out


#: Most liquids a matrix of pair states takes (n x n x 3 arrays; 50,000 user rows asked for 57 GB).
MAX_MATRIX_LIQUIDS = 3000


def _rows(liquids, library):
    if isinstance(liquids, pd.DataFrame):
        if len(liquids) > MAX_MATRIX_LIQUIDS:
            raise SelectorError(f"{len(liquids)} liquids are too many for a table of every pair (at most "
                                f"{MAX_MATRIX_LIQUIDS}): pick fewer, with a filter or a list of names")
        return liquids.reset_index(drop=True)
    if liquids is None or isinstance(liquids, (str, dict, pd.Series, int, float)):
        raise SelectorError("give a list of liquids (at least two), e.g. ['water', 'ethanol']")
    items = list(liquids)
    bad = [x for x in items if not isinstance(x, (str, dict, pd.Series))]
    if bad:
        raise SelectorError(f"each liquid must be a name, CAS number or SMILES (text) or a dict of values, "
                            f"got {bad[0]!r}")
    if not items:
        raise SelectorError("no liquids selected")
    lib = library
    if lib is None and any(isinstance(x, str) for x in items):
        lib = _shared_library()
    recs = []
    for x in items:
        if isinstance(x, str):
            recs.append(lib.iloc[locate(x, lib)])
        else:
            recs.append(pd.Series(_record(x, str(x.get("name", "user liquid")))))
    return pd.DataFrame(recs).reset_index(drop=True)


#: :func:`miscibility_matrix` asks UNIFAC for a second opinion on every pair up to this many
#: liquids (435 pairs, 0.3-1 s the first time; cached per pair), not for larger sets.
UNIFAC_MATRIX_MAX = 30


def miscibility_matrix(liquids, *, temperature: float = 25.0, library: pd.DataFrame | None = None,
                       model=None, unifac: bool | None = None) -> pd.DataFrame:
    """DataFrame of states ("miscible", "partially miscible", "immiscible") for every pair.

    ``liquids``: a list of names/CAS/user dicts, or a library-format DataFrame (up to the whole
    library). Index and columns are the liquid names. ``attrs["reactive_pairs"]``: the pairs
    ``(a, b)`` that react with each other (:func:`selector.cautions.reactive_pair_matrix`);
    ``attrs["uncertain_pairs"]``: water with an amine, pyridine or glycol ether, whose state the
    model cannot be trusted on (:attr:`Miscibility.headline` says "uncertain"); within
    :data:`REFERENCE_WINDOW_C` of 25 C, pairs of the reference tables take their recorded state
    (``attrs["reference_pairs"]``), as in :func:`miscibility`.
    The UNIFAC second opinion of :func:`miscibility` is asked for every pair when ``unifac`` is
    True, or None (the default) and there are at most :data:`UNIFAC_MATRIX_MAX` liquids; pairs on
    which it and the model disagree on one phase or two join ``attrs["uncertain_pairs"]`` and are
    listed in ``attrs["disagreeing_pairs"]`` as ``(a, b, method, unifac_state)``;
    ``attrs["unifac_checked"]`` says whether it was asked.

    >>> m = miscibility_matrix(["water", "hexane", "acetone"])
    >>> m.loc["water", "hexane"], m.loc["water", "acetone"]
    ('immiscible', 'miscible')
    """
    if isinstance(liquids, (list, tuple)) and any(isinstance(x, str) for x in liquids) and library is None:
        library = _shared_library()
    if isinstance(liquids, (list, tuple)) and library is not None and all(isinstance(x, str) for x in liquids):
        from .library import locate_many

        df = library.iloc[locate_many(liquids, library)].reset_index(drop=True)
    else:
        df = _rows(liquids, library)
    if "name" in df.columns and df["name"].astype(str).duplicated().any():
        twice = sorted(set(df["name"].astype(str)[df["name"].astype(str).duplicated()]))
        raise SelectorError(f"{', '.join(twice)} {'is' if len(twice) == 1 else 'are'} listed twice (perhaps "
                            "under another name or its CAS number): give each liquid once")
    st = state_matrix(df, temperature, model)
    names = df["name"].astype(str).tolist() if "name" in df.columns else list(range(len(df)))
    out = pd.DataFrame(st, index=names, columns=names)
    from .cautions import reactive_pair_matrix

    # pairs that react (selector.cautions.PAIR_RULES), whatever their phase behaviour
    i, j = np.nonzero(np.triu(reactive_pair_matrix(df), 1))
    out.attrs["reactive_pairs"] = [(names[p], names[q]) for p, q in zip(i, j)]
    # water with an amine, pyridine or glycol ether: the state is uncertain (Miscibility.headline)
    smiles = df["smiles"].astype("string").fillna("").astype(str).tolist() if "smiles" in df else [""] * len(df)
    water = [k for k in range(len(df)) if _is_water({"smiles": smiles[k], "name": str(names[k])})]
    prone = [k for k in range(len(df)) if _lcst_prone_smiles(smiles[k])]
    unsure = [(w, k) for w in water for k in prone if k != w]
    if water and abs(float(temperature) - 25.0) > 1e-9:
        # water pairs whose state differs from the model's own state at 25 C (Miscibility.trend_doubtful)
        try:
            st25 = state_matrix(df, 25.0, model)
        except SelectorError:
            st25 = st
        unsure += [(w, k) for w in water for k in range(len(df))
                   if k != w and k not in prone and k not in water and st[w, k] != st25[w, k]]
    # at 25 C a pair of the reference table takes its recorded state (Miscibility.reference)
    known = []
    for p, q, state in reference_overlay(df, float(temperature)):
        out.iat[p, q] = out.iat[q, p] = resolve_recorded(state, out.iat[p, q])
        known.append((names[p], names[q]))
    done = set(map(frozenset, known))
    out.attrs["reference_pairs"] = known
    checked = (len(df) <= UNIFAC_MATRIX_MAX) if unifac is None else bool(unifac)
    out.attrs["unifac_checked"] = checked
    out.attrs["disagreeing_pairs"] = _matrix_disagreements(df, st, names, float(temperature), done) if checked else []
    flagged = {frozenset(p) for p in unsure}
    at = {nm: k for k, nm in enumerate(names)}
    unsure += [(at[a], at[b]) for a, b, _, _ in out.attrs["disagreeing_pairs"]
               if frozenset((at[a], at[b])) not in flagged]
    out.attrs["uncertain_pairs"] = [(names[w], names[k]) for w, k in unsure
                                    if frozenset((names[w], names[k])) not in done]
    return out


def _matrix_disagreements(df: pd.DataFrame, st: np.ndarray, names: list, t: float, skip: set) -> list:
    """``(a, b, method, state)`` for the pairs of ``df`` (i < j, not in ``skip``) on which UNIFAC's
    second opinion (:func:`selector.unifac.second_opinion`) and the model state ``st`` differ on one
    phase or two."""
    rows = [r for _, r in df.iterrows()]
    out = []
    for i, j in zip(*np.triu_indices(len(df), 1)):
        if frozenset((names[i], names[j])) in skip:
            continue
        so = second_opinion_of(rows[i], rows[j], t)
        if so.get("state") and _one_phase_differs(so["state"], str(st[i, j])):
            out.append((names[i], names[j], so["method"], so["state"]))
    return out


# ---------------------------------------------------------------- blend check

@dataclass
class BlendCheck:
    """Result of :func:`check_blend_miscible`: ``ok`` and the ``failing`` (a, b, state) pairs."""

    ok: bool
    failing: list
    temperature_c: float = 25.0

    def __getitem__(self, key):
        return getattr(self, key)

    def get(self, key, default=None):
        return getattr(self, key, default)


def check_blend_miscible(names_or_rows, *, temperature: float = 25.0,
                         library: pd.DataFrame | None = None, model=None) -> BlendCheck:
    """Check that every pair of a blend's liquids is miscible in all proportions (the HSP model,
    and the recorded state where the reference tables answer: :func:`reference_overlay`).

    ``names_or_rows``: list of names/CAS/user dicts or a library-format DataFrame. Returns a
    :class:`BlendCheck` (``ok``; ``failing`` = list of (a, b, state)). A blend of one liquid is ok.

    >>> check_blend_miscible(["toluene", "heptane"]).ok
    True
    >>> check_blend_miscible(["water", "toluene", "acetone"]).failing
    [('water', 'toluene', 'immiscible')]
    """
    if isinstance(names_or_rows, str):
        raise SelectorError("give the blend's liquids as a list of at least two names")
    if isinstance(names_or_rows, (list, tuple)) and names_or_rows and all(isinstance(x, str) for x in names_or_rows):
        lib = _shared_library() if library is None else library
        from .library import locate_many

        df = lib.iloc[locate_many(list(names_or_rows), lib)].reset_index(drop=True)
    else:
        df = _rows(names_or_rows, library)
    if len(df) == 0:
        raise SelectorError("no liquids in the blend")
    st = state_matrix(df, temperature, model)
    for i, j, state in reference_overlay(df, float(temperature)):   # the recorded states, as everywhere
        st[i, j] = st[j, i] = resolve_recorded(state, st[i, j])
    names = df["name"].astype(str).tolist() if "name" in df.columns else [str(i) for i in range(len(df))]
    iu, ju = np.triu_indices(len(df), 1)
    failing = [(names[i], names[j], str(st[i, j])) for i, j in zip(iu, ju) if st[i, j] != "miscible"]
    return BlendCheck(not failing, failing, float(temperature))


def phase_sweep(a, b, *, n: int = 41, library: pd.DataFrame | None = None,
                t_min_c: float = -60.0, t_max_c: float = 250.0) -> pd.DataFrame:
    """:func:`miscibility` of ``a`` and ``b`` at ``n`` temperatures across the range where both are
    liquid at 1 atm (above both melting points, below both boiling points, within
    ``t_min_c``..``t_max_c``): the data of a temperature-composition phase diagram. Where the
    model UCST (LCST) lies in that range, five temperatures just below (above) it are added so that
    the dome closes at the critical point.

    Columns ``temperature_c``, ``binodal_low`` / ``binodal_high`` (volume fractions of ``a`` in the
    two coexisting phases, NaN where one phase), ``spinodal_low`` / ``spinodal_high`` and ``state``.
    A loop over a few temperatures, not over the library.

    >>> s = phase_sweep("hexane", "methanol", n=5)
    >>> list(s.columns)[:3], bool(s["binodal_low"].notna().any())
    (['temperature_c', 'binodal_low', 'binodal_high'], True)
    """
    from .library import find_liquid

    lib = load_library() if library is None else library
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or not 2 <= n <= 1001:
        raise SelectorError(f"n must be a whole number from 2 to 1001 (temperatures on the diagram), got {n!r}")
    ra_, rb_ = find_liquid(a, lib), find_liquid(b, lib)
    lo = float(np.nanmax([t_min_c, ra_["melting_point_c"], rb_["melting_point_c"]])) + 0.5
    hi = float(np.nanmin([t_max_c, ra_["boiling_point_c"], rb_["boiling_point_c"]])) - 0.5
    if not hi > lo:
        raise SelectorError(f"{ra_['name']} and {rb_['name']} are not both liquid at any temperature "
                            f"between {t_min_c:g} and {t_max_c:g} C")
    grid = np.linspace(lo, hi, int(n))
    # the gap closes at the UCST (opens at the LCST): a few temperatures just inside it draw the
    # top of the dome, which an even grid would cut flat up to one grid step short of it
    first = miscibility(a, b, temperature=float(lo), library=lib, unifac=False, reference=False)
    step = (hi - lo) / max(int(n) - 1, 1)
    near = np.array([0.5, 0.2, 0.05, 0.01, 0.001])
    extra = []
    for t_c, sign in ((first.ucst_c, -1.0), (first.lcst_c, 1.0)):
        if t_c is not None and np.isfinite(t_c) and lo < t_c < hi:
            extra.extend(t_c + sign * near * step)
    temps = np.unique(np.concatenate([grid, np.clip(extra, lo, hi)])) if extra else grid
    rows = []
    for t in temps:
        m = miscibility(a, b, temperature=float(t), library=lib, unifac=False, reference=False)
        bi, sp = m.binodal or {}, m.spinodal or (np.nan, np.nan)
        pa = bi.get("phi_a", np.nan)
        p_lo, p_hi = (float(pa[0]), float(pa[1])) if isinstance(pa, (tuple, list)) else \
            (float(pa), float(bi.get("phi_b", np.nan)))
        rows.append({"temperature_c": float(t), "binodal_low": p_lo, "binodal_high": p_hi,
                     "spinodal_low": float(sp[0]), "spinodal_high": float(sp[1]), "state": m.state})
    return pd.DataFrame(rows)
