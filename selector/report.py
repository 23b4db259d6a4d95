"""Printable recommendation reports and the safety notes that go with every suggested liquid.

Shared by the web front end and any script: a report carries the inputs of a recommendation
(target, temperature, filters), the recommended liquids or blends, where the numbers come from,
and the usual cautions. Formats: Markdown (``fmt="markdown"``) and self-contained HTML
(``fmt="html"``, printable from any browser).

Flammability is classed by the GHS criteria for flammable liquids (UN GHS, Rev. 9 (2021),
chapter 2.6, table 2.6.1): category 1 flash point < 23 C and initial boiling point <= 35 C;
category 2 flash point < 23 C and boiling point > 35 C; category 3 flash point 23-60 C;
category 4 flash point > 60-93 C. Above 93 C a liquid is not classed as flammable, which does not
mean it cannot burn. A liquid without a flash point in the library is reported as
*unclassified*, never as safe.

Every text cell written into a report is escaped for its format (HTML entities, Markdown table
pipes) and guarded against spreadsheet formula injection like :func:`selector.io.guard_cells`.
"""
from __future__ import annotations

import datetime as _dt
import html as _html
import math

import numpy as np
import pandas as pd

from .io import guard_cells

GENERAL_CAUTION = (
    "Solvents can be flammable, toxic or reactive. Before handling any liquid named here, read the "
    "supplier's safety data sheet, keep exposure below the applicable limits, work with adequate "
    "ventilation and away from ignition sources, and follow local regulation and your site's rules. "
    "The safety data sheet and local regulation come first; this report is a starting point for "
    "laboratory tests, not a safety assessment.")

#: Whose exposure limits the library carries, and that they are not everyone's.
EXPOSURE_NOTE = (
    "Exposure limits are Ontario's (Canada) 8-hour averages, the set the reference library "
    "(chemicals) carries. The limit where you work may be much lower (from memory, the EU's is "
    "10 ppm for NMP against Ontario's 98.7 ppm, and 20 ppm for n-hexane against 50 ppm): use the one on "
    "the supplier's safety data sheet (section 8) and in your local regulation.")

UNCLASSIFIED = "unclassified (no flash point in the library)"

#: A liquid without a limit in the set the library carries (which is not "no limit exists").
NO_LIMIT = "none in the Ontario list the library carries: see the safety data sheet, section 8"

#: Column labels with units for the tables of a report.
COLUMN_LABELS = {
    "rank": "Rank", "name": "Liquid", "cas": "CAS", "delta_d": "dD (MPa^0.5)",
    "delta_p": "dP (MPa^0.5)", "delta_h": "dH (MPa^0.5)", "ra": "Ra (MPa^0.5)", "red": "RED",
    "polarity_match": "Polarity match", "score": "Score", "molar_volume": "V (cm3/mol)",
    "boiling_point_c": "Boiling point (C)", "flash_point_c": "Flash point (C)",
    "hsp_source": "HSP source", "sources_disagree": "Sources disagree", "hsp_note": "HSP note",
    "flammability": "Flammability (GHS)", "exposure": "Exposure limit",
    "hazard_class": "Hazard class", "h_statements": "GHS statements", "components": "Components", "fractions": "Volume fractions",
}


#: GHS flash-point limits of flammable-liquid categories 2/3, 3/4 and 4/not classed (C; UN GHS
#: Rev. 9, table 2.6.1): below 23, at most 60, at most 93.
GHS_FLASH_LIMITS_C = (23.0, 60.0, 93.0)


def flammability_category(flash_point_c, boiling_point_c) -> np.ndarray:
    """GHS flammable-liquid category text for each liquid (vectorised).

    ``flash_point_c`` and ``boiling_point_c`` in C (arrays or scalars; NaN = no data).
    Criteria: UN GHS Rev. 9, table 2.6.1 (see module doc). Returns an array of strings.

    >>> flammability_category([-20.0, 4.0, 40.0, 80.0, 150.0, float("nan")],
    ...                       [30.0, 111.0, 150.0, 200.0, 300.0, 100.0]).tolist()[:5]
    ['category 1 (extremely flammable)', 'category 2 (highly flammable)', 'category 3 (flammable)', 'category 4 (combustible)', 'not classed (flash point > 93 C)']
    """
    fp = np.atleast_1d(np.asarray(flash_point_c, dtype=float))
    bp = np.broadcast_to(np.atleast_1d(np.asarray(boiling_point_c, dtype=float)), fp.shape)
    with np.errstate(invalid="ignore"):
        c2, c3, c4 = GHS_FLASH_LIMITS_C
        conds = [np.isnan(fp),
                 (fp < c2) & (bp <= 35),
                 fp < c2,
                 fp <= c3,
                 fp <= c4]
    choices = [UNCLASSIFIED, "category 1 (extremely flammable)", "category 2 (highly flammable)",
               "category 3 (flammable)", "category 4 (combustible)"]
    return np.select(conds, choices, default="not classed (flash point > 93 C)").astype(object)


def exposure_source_names(src: pd.Series) -> pd.Series:
    """Exposure-limit sources as a reader knows them: the reference library's key "Ontario Limits"
    becomes "Ontario, Canada" (whose limits they are)."""
    return src.astype(str).str.replace("Ontario Limits", "Ontario, Canada", regex=False)


def _exposure_text(df: pd.DataFrame) -> np.ndarray:
    n = len(df)
    if "exposure_limit" not in df:
        return np.full(n, NO_LIMIT, dtype=object)
    v = pd.to_numeric(df["exposure_limit"], errors="coerce").to_numpy(float)
    unit = df.get("exposure_limit_unit", pd.Series([""] * n, index=df.index)).astype(str).to_numpy()
    src = df.get("exposure_limit_source", pd.Series([""] * n, index=df.index)).astype(str).to_numpy()
    txt = pd.Series(v).map(lambda x: f"{x:.4g}").to_numpy(object) + " " + unit
    src = exposure_source_names(pd.Series(src, dtype=object)).to_numpy(object)
    txt = np.where(src != "", txt + " (" + src + ")", txt)
    none = NO_LIMIT
    if "short_term_limit" in df:
        sv = pd.to_numeric(df["short_term_limit"], errors="coerce").to_numpy(float)
        su = df.get("short_term_limit_unit", pd.Series([""] * n, index=df.index)).astype(str).to_numpy()
        stxt = "no 8-h limit; short-term (15 min) " + pd.Series(sv).map(lambda x: f"{x:.4g}").to_numpy(object) + " " + su
        none = np.where(np.isfinite(sv), stxt, none)
    return np.where(np.isfinite(v), txt, none).astype(object)


def caution_table(liquids: pd.DataFrame) -> pd.DataFrame:
    """Per-liquid safety notes for a table of library rows.

    Returns ``name, flash_point_c, boiling_point_c, flammability`` (GHS category, see
    :func:`flammability_category`), ``exposure`` (limit, unit and source from the library, or a
    note that there is none) and ``hazard_class`` (the column of the input if present, otherwise
    looked up in the bundled library by CAS or name; empty values and liquids without hazard data
    are shown as ``"unclassified"``) and, when the input has
    it, ``h_statements`` (GHS hazard statements as stored in the input).
    """
    n = len(liquids)
    fp = pd.to_numeric(liquids.get("flash_point_c", pd.Series([np.nan] * n)), errors="coerce")
    bp = pd.to_numeric(liquids.get("boiling_point_c", pd.Series([np.nan] * n)), errors="coerce")
    out = pd.DataFrame({
        "name": liquids["name"].astype(str).to_numpy(),
        "flash_point_c": fp.to_numpy(float),
        "boiling_point_c": bp.to_numpy(float),
        "flammability": flammability_category(fp.to_numpy(float), bp.to_numpy(float)),
        "exposure": _exposure_text(liquids),
    })
    from .cautions import not_flammable

    if "cas" in liquids:
        nf = not_flammable(liquids.assign(flash_point_c=fp.to_numpy(float)))
        out.loc[nf, "flammability"] = "not flammable (parameters/hazards.csv, from memory; check the SDS)"
    if "hazard_class" not in liquids and "name" in liquids:
        # rows straight from rank() and the like carry no class: look it up (CAS, then name)
        from .hazards import attach_hazards

        liquids = attach_hazards(liquids.reset_index(drop=True))
    if "hazard_class" in liquids:
        hc = liquids["hazard_class"].astype(object).to_numpy()
        out["hazard_class"] = np.where(pd.isna(hc) | (pd.Series(hc).astype(str).str.strip() == "").to_numpy(),
                                       "unclassified", hc)
    else:
        out["hazard_class"] = "unclassified"
    if "h_statements" in liquids:
        out["h_statements"] = liquids["h_statements"].fillna("").astype(str).to_numpy()
    return out


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, (float, np.floating)):
        return "" if not math.isfinite(float(v)) else f"{float(v):.3g}" if abs(v) < 1e-3 and v != 0 else f"{float(v):.2f}"
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    if isinstance(v, (tuple, list)):
        return "; ".join(_cell(x) for x in v)
    return str(v)


def round_half_away(x, digits: int = 0):
    """Round half away from zero (188.5 -> 189), as printf and the pages' tables do; Python's
    ``round`` and ``format`` round half to even (188.5 -> 188). Scalars or arrays; NaN stays NaN.

    >>> float(round_half_away(188.5)), float(round_half_away(-0.25, 1)), float(round_half_away(2.675, 2))
    (189.0, -0.3, 2.68)
    """
    k = 10.0 ** digits
    a = np.asarray(x, dtype=float)
    # the small nudge takes decimal ties stored just below .5 (2.675 is 2.67499999...) up
    return np.sign(a) * np.floor(np.abs(a) * k + 0.5 + 1e-9) / k


def _table_cells(df: pd.DataFrame, columns) -> tuple[list[str], list[list[str]]]:
    cols = [c for c in (columns or list(df.columns)) if c in df.columns]
    g = guard_cells(df[cols])
    head = [COLUMN_LABELS.get(c, c) for c in cols]
    whole = [c.endswith("_c") for c in cols]  # temperatures in C: whole degrees
    # half away from zero, as the pages' tables round (188.5 C is 189 on both, not 188 here)
    rows = [[(f"{float(round_half_away(v)):.0f}" if w and isinstance(v, (float, np.floating)) and math.isfinite(float(v))
              else _cell(v)) for v, w in zip(r, whole)] for r in g.itertuples(index=False, name=None)]
    return head, rows


def _md_escape(s: str) -> str:
    return str(s).replace("\\", "\\\\").replace("|", "\\|").replace("\n", " ").replace("<", "&lt;")


def _md_table(head, rows) -> str:
    out = ["| " + " | ".join(_md_escape(h) for h in head) + " |",
           "|" + "|".join("---" for _ in head) + "|"]
    out += ["| " + " | ".join(_md_escape(c) for c in r) + " |" for r in rows]
    return "\n".join(out)


def _html_table(head, rows) -> str:
    e = _html.escape
    th = "".join(f"<th>{e(h)}</th>" for h in head)
    body = "".join("<tr>" + "".join(f"<td>{e(c)}</td>" for c in r) + "</tr>" for r in rows)
    return f"<table><thead><tr>{th}</tr></thead><tbody>{body}</tbody></table>"


def _target_text(target) -> str:
    if target is None:
        return "none"
    if hasattr(target, "describe"):
        return target.describe() + (f" (source: {target.source})" if getattr(target, "source", "") else "")
    return str(target)


def build_report(title: str, *, target=None, inputs: dict | None = None,
                 table: pd.DataFrame | None = None, columns=None, liquids: pd.DataFrame | None = None,
                 sources: list[str] | None = None, notes: list[str] | None = None,
                 fmt: str = "markdown", created: _dt.datetime | None = None) -> str:
    """A short printable report of one recommendation.

    ``title``: heading. ``target``: a :class:`~selector.targets.Target` (or any object with
    ``describe()``) or text. ``inputs``: mapping of input name -> value (temperature in C,
    filters...). ``table``: the recommendation (e.g. the head of :func:`selector.rank`), shown
    with ``columns`` in that order. ``liquids``: library rows of every liquid the
    recommendation names; their safety notes (:func:`caution_table`) are listed. ``sources``
    and ``notes``: lines of text. ``fmt``: ``"markdown"`` or ``"html"``. The general caution
    (:data:`GENERAL_CAUTION`) is always included.

    >>> import pandas as pd
    >>> t = pd.DataFrame({"name": ["=cmd()|x"], "ra": [1.234]})
    >>> txt = build_report("Demo", table=t)
    >>> "'=cmd()\\\\|x" in txt and "1.23" in txt and "safety data sheet" in txt
    True
    """
    from .errors import SelectorError

    if fmt not in ("markdown", "html"):
        raise SelectorError(f"report format must be 'markdown' or 'html', got {fmt!r}")
    created = created or _dt.datetime.now(_dt.timezone.utc)
    stamp = created.strftime("%Y-%m-%d %H:%M UTC")
    inputs = dict(inputs or {})
    input_rows = [[str(k), _cell(v)] for k, v in inputs.items()]
    caut = caution_table(liquids) if liquids is not None and len(liquids) else None
    caut_cols = ["name", "flash_point_c", "flammability", "exposure", "hazard_class", "h_statements"]
    from . import __version__

    if fmt == "markdown":
        parts = [f"# {_md_escape(title)}", "",
                 f"Created {stamp} with likewise {__version__}.", "",
                 f"**Target:** {_md_escape(_target_text(target))}", ""]
        if input_rows:
            parts += ["## Inputs", "", _md_table(["Input", "Value"], input_rows), ""]
        if table is not None:
            h, r = _table_cells(table, columns)
            parts += ["## Ranked candidates (a shortlist for tests, not an endorsement)", "", _md_table(h, r), ""]
        if caut is not None:
            h, r = _table_cells(caut, caut_cols)
            parts += ["## Safety notes per liquid", "", _md_table(h, r), ""]
        parts += ["## Cautions", "", _md_escape(GENERAL_CAUTION), ""]
        if caut is not None:
            parts += [_md_escape(EXPOSURE_NOTE), ""]
        for n in notes or []:
            parts += [f"- {_md_escape(n)}"]
        if notes:
            parts.append("")
        if sources:
            parts += ["## Sources", ""] + [f"- {_md_escape(s)}" for s in sources] + [""]
        return "\n".join(parts)

    e = _html.escape
    css = ("body{font-family:sans-serif;max-width:60em;margin:2em auto;color:#222}"
           "table{border-collapse:collapse;margin:.5em 0}td,th{border:1px solid #999;padding:2px 6px;"
           "font-size:90%}th{background:#eee}.caution{border-left:4px solid #D55E00;padding:.3em .8em;"
           "background:#fff4ec}")
    parts = ["<!DOCTYPE html>", "<html><head><meta charset='utf-8'>", f"<title>{e(title)}</title>",
             f"<style>{css}</style></head><body>", f"<h1>{e(title)}</h1>",
             f"<p>Created {e(stamp)} with likewise {e(__version__)}.</p>",
             f"<p><b>Target:</b> {e(_target_text(target))}</p>"]
    if input_rows:
        parts += ["<h2>Inputs</h2>", _html_table(["Input", "Value"], input_rows)]
    if table is not None:
        h, r = _table_cells(table, columns)
        parts += ["<h2>Ranked candidates (a shortlist for tests, not an endorsement)</h2>", _html_table(h, r)]
    if caut is not None:
        h, r = _table_cells(caut, caut_cols)
        parts += ["<h2>Safety notes per liquid</h2>", _html_table(h, r)]
    parts += ["<h2>Cautions</h2>", f"<p class='caution'>{e(GENERAL_CAUTION)}</p>"]
    if caut is not None:
        parts.append(f"<p>{e(EXPOSURE_NOTE)}</p>")
    if notes:
        parts += ["<ul>"] + [f"<li>{e(n)}</li>" for n in notes] + ["</ul>"]
    if sources:
        parts += ["<h2>Sources</h2>", "<ul>"] + [f"<li>{e(s)}</li>" for s in sources] + ["</ul>"]
    parts.append("</body></html>")
    return "\n".join(parts)


#: Where the numbers in a ranking come from (for the sources list of a report).
LIBRARY_SOURCES = [
    "Hansen solubility parameters: the `chemicals` library (solubility module), tables of Alshehri "
    "et al., AIChE J. 68 (2022) e17469; Diaz de los Rios and Murcia Belmonte, SN Appl. Sci. 4 (2022) "
    "185; Schrier, Wolfram Data Repository (2020) - the key of each liquid is in its HSP source column.",
    "Molar volume, boiling and flash points, exposure limits: `thermo`/`chemicals` (method recorded per "
    "liquid in the library).",
    "Distance Ra and RED: C. M. Hansen, Hansen Solubility Parameters: A User's Handbook, 2nd ed., CRC "
    "Press, 2007.",
    "Flammability classes: UN GHS Rev. 9 (2021), chapter 2.6.",
]
