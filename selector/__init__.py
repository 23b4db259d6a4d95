"""selector - choose solvents and solvent blends with Hansen solubility parameters.

Public API (stable names; heavy modules are imported on first use so that the command line
starts fast):

* :func:`load_library`, :func:`find_liquid` - the bundled solvent library and look-up;
* :func:`rank` - rank liquids against a point or sphere target;
* :func:`fit_sphere` - a solute's sphere from lab tests;
* :func:`miscibility`, :func:`miscibility_matrix` - will two liquids mix;
* :func:`find_blends`, :func:`substitutes`, :func:`hazard`, :func:`drying_path` - blends,
  safer substitutes, hazard classes and the drying check;
* :func:`estimate`, :class:`HSPEstimator` - HSP and molar volume from a SMILES string;
* :mod:`selector.hansen` - the pure Hansen functions (Ra, RED, blends, Teas, temperature).

Safety: a ranking is a starting point for laboratory tests, not a safety assessment. Read the
supplier's safety data sheet and follow local regulation before handling any solvent.
"""
from __future__ import annotations

import importlib

__version__ = "0.1.0"

_EXPORTS = {
    "load_library": "library",
    "find_liquid": "library",
    "validate_user_table": "library",
    "save_user_liquids": "library",
    "rank": "ranking",
    "polarity_match": "ranking",
    "Target": "targets",
    "as_target": "targets",
    "SelectorError": "errors",
    "UnknownLiquidError": "errors",
    "GenericNameError": "errors",
    "fit_sphere": "spheres",
    "miscibility": "mixing",
    "miscibility_matrix": "mixing",
    "phase_sweep": "mixing",
    "check_blend_miscible": "mixing",
    "find_blends": "blends",
    "substitutes": "blends",
    "hazard": "hazards",
    "drying_path": "drying",
    "estimate": "estimation",
    "HSPEstimator": "estimation",
    "hansen": None,
}

__all__ = sorted(_EXPORTS)


def __getattr__(name):
    if name not in _EXPORTS:
        raise AttributeError(f"module 'selector' has no attribute {name!r}")
    mod = _EXPORTS[name]
    if mod is None:
        return importlib.import_module(f".{name}", __name__)
    return getattr(importlib.import_module(f".{mod}", __name__), name)


def __dir__():
    return __all__
