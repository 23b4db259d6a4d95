"""Blend design: two- and three-liquid mixtures whose volume-weighted HSP land on the target."""
import numpy as np
import pandas as pd
import streamlit as st

import selector
from lwui import common, plots
from selector.blends import blend_labels, mixing_warning, price_error_named, read_price_list
from selector.errors import SelectorError
from selector.report import LIBRARY_SOURCES, build_report

st.title("Blend design")
common.demo_banner()
common.target_line()
st.caption("A blend's HSP are the volume-fraction-weighted mean of its components, so two liquids that "
           "each miss the target can together land inside it. Blends are ordered by Ra in steps of "
           "0.5 MPa½ (closer than that counts as a tie); within a step, blends with a library liquid that has "
           "no hazard data come last (a liquid of your own without data counts as the worst class), then fewer liquids, then a better hazard class, then Ra; no liquid "
           "appears in more than three blends.")

mod = common.capability("blends")
if mod is None:
    st.stop()


@st.cache_data(show_spinner="Designing blends…", max_entries=64)
def design(target_key, max_components, min_fraction, temperature, top, filters_key, lib_key,
           price_pairs=(), cost_basis=None):
    # lib_key (the user's liquids file and its time stamp) makes a saved change start a new design;
    # the prices enter the key as (name, price) pairs and their basis, never as the uploaded file
    from selector.targets import Target

    tg = Target(*target_key[:3], target_key[3], name=target_key[4], liquid=target_key[5])
    prices = ({cost_basis: pd.DataFrame({"name": [n for n, _ in price_pairs],
                                         cost_basis: pd.Series([v for _, v in price_pairs], dtype=object)})}
              if price_pairs else {})
    return selector.find_blends(tg, max_components=max_components, min_fraction=min_fraction,
                                temperature=temperature, top=top, library=common.library(), **prices,
                                **dict(filters_key))


def design_priced(label, *args, price_pairs=(), cost_basis=None):
    """:func:`design`, with a price list's problems told under the list's own name (as the
    command line tells them under the file's)."""
    try:
        return design(*args, price_pairs, cost_basis)
    except SelectorError as e:
        named = price_error_named(e, label) if price_pairs else None
        if named is not None:
            raise named from None
        raise


#: Price bases of :func:`selector.find_blends`, as the page names them.
BASES = {"cost_per_litre": "per litre", "cost_per_kg": "per kg"}
COST_LABELS = {"cost_per_litre": "Cost per litre", "cost_per_kg": "Cost per kg"}
COLUMNS = {**common.COLUMN_CONFIG,
           "cost_per_litre": st.column_config.NumberColumn(
               "Cost per litre", format="%.2f", help="volume-weighted mean of your prices per litre, in "
               "your currency"),
           "cost_per_kg": st.column_config.NumberColumn(
               "Cost per kg", format="%.2f", help="the cost per litre over the blend's density (ideal "
               "mixing, 25 °C densities), in your currency; blank without a density"),
           "pareto": st.column_config.CheckboxColumn(
               "On the cost front", help="no other blend is both as close to the target and as cheap "
               "(the cost-versus-Ra front, on the basis of your prices)")}


def _cell(v):
    """A price-list cell for the cache key: None when empty, a float when numeric, else the text
    as given (the library names it in its message)."""
    if v is None or (pd.api.types.is_scalar(v) and pd.isna(v)) or (isinstance(v, str) and not v.strip()):
        return None
    if isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, bool):
        return float(v) if np.isfinite(v) else str(v)
    return str(v)


def _pairs(names, values) -> tuple:
    """(name, price) pairs, hashable, for the cache key."""
    return tuple((_cell(n), _cell(v)) for n, v in zip(names, values))


def price_inputs(upload, typed, typed_basis):
    """(pairs, basis, label) of the price list given on the page: ``()`` pairs when none is. The
    uploaded file is read by :func:`selector.blends.read_price_list`; typed rows are added to it
    (rows with neither a name nor a price are skipped). The prices are checked by the library."""
    pairs, bases, labels = (), [], []
    if upload is not None:
        labels.append(f"the price list {upload.name}")
        got = read_price_list(upload, what=labels[-1])
        (b, tab), = got.items()
        pairs += _pairs(tab["name"], tab[b])
        bases.append(b)
    if typed is not None:
        rows = _pairs(typed["name"], typed["price"])
        rows = tuple(r for r in rows if r != (None, None))
        if rows:
            if bases and bases[0] != typed_basis:
                raise SelectorError(f"{labels[0]} gives prices {BASES[bases[0]]} and the typed prices are "
                                    f"{BASES[typed_basis]}: one basis for all prices (set 'Typed prices are' "
                                    f"to {BASES[bases[0]]}, or convert them)")
            labels.append("the typed prices")
            pairs += rows
            bases.append(typed_basis)
    return pairs, (bases[0] if pairs else None), " and ".join(labels)


@st.cache_data(show_spinner=False, max_entries=64)
def dry(comps, fracs, temperature, tgt, activity, rh, lib_key):
    from selector.targets import Target

    return selector.drying_path(list(comps), list(fracs), temperature=temperature, library=common.library(),
                                target=Target(*tgt[:3], tgt[3], liquid=tgt[4]), activity=activity,
                                relative_humidity=rh)


def freeze(f: dict):
    return tuple(sorted((k, tuple(v) if isinstance(v, list) else v) for k, v in f.items()))


filters, temp = common.filter_panel("bl")
with st.expander("Prices (optional)", expanded=False):
    st.caption("With prices, only the priced liquids are used; each blend gets its cost per litre and per "
               "kg, and the blends that no other blend beats on both Ra and cost (the cost-versus-Ra front) "
               "are marked. Prices are your own figures, in whatever currency you use: the costs "
               "shown are in that currency. Liquids may be named by name, synonym or CAS number.")
    up = st.file_uploader("Price list (CSV with columns name and cost_per_litre or cost_per_kg)",
                          type=["csv", "txt"], key="bl_prices")
    typed_tab, typed_basis = None, "cost_per_litre"
    if st.toggle("Type prices in a table", key="bl_typed",
                 help="added to the uploaded list, if any, on the same basis"):
        typed_basis = st.radio("Typed prices are", list(BASES), format_func=BASES.get, horizontal=True,
                               key="bl_basis")
        typed_tab = st.data_editor(
            pd.DataFrame({"name": pd.Series([], dtype="string"), "price": pd.Series([], dtype=float)}),
            num_rows="dynamic", hide_index=True, key="bl_price_tab", width="stretch",
            column_config={"name": st.column_config.TextColumn("Liquid", help="name, synonym or CAS number"),
                           "price": st.column_config.NumberColumn("Price", help="your own figure, in your "
                                                                  "currency, per litre or per kg as chosen")})
try:
    price_pairs, cost_basis, price_label = price_inputs(up, typed_tab, typed_basis)
    price_error = None
except common.ERRORS as e:
    price_pairs, cost_basis, price_label, price_error = (), None, "", e
with st.form("bl_form"):
    c1, c2, c3 = st.columns(3)
    ncomp = c1.radio("Liquids per blend (at most)", [2, 3], index=1, horizontal=True, key="bl_n",
                     help="a third liquid is proposed only where it brings the blend closer to the "
                          "target than each of its pairs")
    # no min/max on the inputs: a value out of range reaches the library and is answered there
    minf = c2.number_input("Smallest share (volume fraction)", value=0.05, step=0.01, key="bl_min",
                           help="no component below this share; at most 0.5 for two liquids, 0.33 for three")
    top = c3.number_input("Blends to show", value=20, step=5, key="bl_top", help="1 or more")
    st.form_submit_button("Design blends", type="primary")

t = common.target()
if price_error is not None:
    common.show_error(price_error)
    st.stop()
res = common.call(design_priced, price_label, (t.delta_d, t.delta_p, t.delta_h, t.radius, t.name, t.liquid),
                  int(ncomp), float(minf), temp, int(top), freeze(filters), common.lib_key(),
                  price_pairs=price_pairs, cost_basis=cost_basis)
if res is None:
    st.stop()
front = res.attrs.get("pareto") if price_pairs else None
price_notes = list(res.attrs.get("price_notes", [])) if price_pairs else []
if price_pairs:
    st.caption(f"Prices: {len(price_pairs)} from {price_label}, {BASES[cost_basis]}, in your own currency; only "
               "the priced liquids are candidates.")
for n in price_notes:
    st.caption(f"Prices: {common.ui_units(n)}.")
if len(res) == 0:
    st.warning("No blend meets these conditions; widen the filters or lower the smallest share"
               + (", or price more liquids." if price_pairs else "."))
    st.stop()

res = res.copy()
common.target_notes(res.attrs.get("target"))
res.attrs = {}  # a Target in attrs cannot go to the browser
res.insert(0, "blend", blend_labels(res, "volume", digits=0))
res.insert(1, "by_mass", blend_labels(res, "mass", digits=0))
has_r = "red" in res and res["red"].notna().any()
from selector.blends import estimated_density_note
from selector.library import estimated_components

res["estimated"] = estimated_components(res, common.library())
has_est = res["estimated"].ne("").any()
st.subheader("Best five")
cost_col = COST_LABELS.get(cost_basis)
common.readable_top(res.rename(columns={cost_basis: cost_col}) if cost_col else res,
                    ["blend", "red" if has_r else None, "ra", cost_col, "hazard_class", "lowest_flash_point_c",
                     "estimated" if has_est else None, "hazard_notes"], 5)
mix_warn = mixing_warning(res)
if mix_warn:
    st.warning(common.ui_units(mix_warn).replace("(mixing_note)", "(the Mixing note column)"),
               icon=":material/science:")
if has_est:
    st.caption("estimated = components whose HSP are estimated from structure (not measured): such a "
               "blend point is as uncertain as they are; test it before you rely on it.")
st.caption("Shares in Blend are by volume; By mass is the same blend by weight, for the balance (ideal "
           "mixing, 25 C densities; blank where a density is unknown).")
dnote = estimated_density_note(res, common.library())
if dnote:
    st.caption(dnote.replace("by_mass", "By mass"))
if front is not None and len(front):
    # the figures of the table's own columns: labels as in Blend, Ra and costs to two decimals
    lab = [common.md_escape(x) for x in blend_labels(front, "volume", digits=0)]
    cost = front[cost_basis].to_numpy(float)
    cheap = int(np.argmin(cost))
    unit = BASES[cost_basis]
    missing = len(front) - int(res["pareto"].sum())
    line = (f"**Cost-versus-Ra front:** {len(front)} blend{'s' if len(front) != 1 else ''}, from the closest, "
            f"{lab[0]} (Ra {front['ra'].iloc[0]:.2f} MPa½, {cost[0]:.2f} {unit})")
    line += (", which is also the cheapest" if cheap == 0 else
             f", to the cheapest, {lab[cheap]} (Ra {front['ra'].iloc[cheap]:.2f} MPa½, {cost[cheap]:.2f} {unit})")
    line += (f"; {missing} of them {'is' if missing == 1 else 'are'} not in the table below (each liquid "
             "appears in at most three blends, and the table stops at *Blends to show*)" if missing > 0 else "")
    st.markdown(line + ". Marked in *On the cost front*; the whole front is listed under the table.")
show_cols = [c for c in res.columns if c not in ("components", "fractions", "mass_fractions")]
if price_pairs:   # the costs beside Ra, not at the far right
    priced_cols = [c for c in ("cost_per_litre", "cost_per_kg", "pareto") if c in show_cols]
    rest = [c for c in show_cols if c not in priced_cols]
    pos = rest.index("red") + 1 if "red" in rest else rest.index("ra") + 1
    show_cols = rest[:pos] + priced_cols + rest[pos:]
common.table(res[show_cols], hide_index=True, width="stretch", column_config=COLUMNS)
if front is not None and len(front):
    with st.expander(f"The whole cost-versus-Ra front ({len(front)} blends, closest first)", expanded=False):
        fr = front.copy()
        fr.attrs = {}
        fr.insert(0, "blend", blend_labels(fr, "volume", digits=0))
        fr.insert(1, "by_mass", blend_labels(fr, "mass", digits=0))
        fcols = [c for c in ["blend", "by_mass", "ra", "red" if has_r else None, "cost_per_litre", "cost_per_kg",
                             "hazard_class", "lowest_flash_point_c", "lowest_known_flash_point_c", "not_flammable",
                             "hazard_notes", "mixing_note"] if c and c in fr.columns]
        common.table(fr[fcols], hide_index=True, width="stretch", column_config=COLUMNS)
        st.caption("Each blend here is the cheapest of those at least as close to the target; costs in your "
                   "own currency, from your prices.")
        from selector.io import to_csv_text

        st.download_button("Download the front (CSV)", to_csv_text(fr.drop(columns=["blend"])),
                           file_name="blends_cost_front.csv", mime="text/csv", key="bl_front_csv",
                           on_click="ignore")

names = sorted({c for cs in res["components"] for c in cs})
lib = common.library()
comp_rows = lib.loc[lib["name"].isin(names)]
common.cautions(comp_rows, title="Safety notes for every liquid in these blends")

inputs = common.filters_as_inputs(filters, temp)
inputs.update({"liquids per blend": int(ncomp), "smallest share": float(minf)})
if price_pairs:
    inputs["prices"] = f"{len(price_pairs)} from {price_label}, {BASES[cost_basis]} (your own figures and currency)"
rep_cols = [c for c in ["blend", "by_mass", "delta_d", "delta_p", "delta_h", "ra", "red", "hazard_class",
                        cost_basis, "pareto"] if c and c in res]
kw = dict(target=t, inputs=inputs, table=res.head(10), columns=rep_cols, liquids=common.with_hazards(comp_rows),
          sources=LIBRARY_SOURCES + ["Blend HSP: volume-fraction-weighted mean (Hansen's handbook, ch. 1)."],
          notes=(["The target is the INVENTED demo resin, not measured data."] if common.is_demo() else [])
          + ([mix_warn.replace("(mixing_note)", "(see the full table's mixing_note)")] if mix_warn else [])
          + ([f"Prices: {n}." for n in price_notes]
             + ["Costs are from the user's own prices, in the user's currency; pareto marks the "
                "cost-versus-Ra front."] if price_pairs else []))
common.downloads(res.drop(columns=["blend"]), stem="blends", report_md=build_report("Blend design", **kw),
                 report_html=build_report("Blend design", fmt="html", **kw), key="bl")

st.subheader("One blend in detail")
pick = st.selectbox("Blend", list(res["blend"]), key="bl_pick")
row = res.loc[res["blend"] == pick].iloc[0]
comps, fracs = list(row["components"]), list(row["fractions"])
tab1, tab2, tab3 = st.tabs(["Drying path", "Teas triangle", "3-D Hansen space"])
with tab1:
    dmod = common.capability("drying")
    if dmod is not None:
        d1, d2 = st.columns(2)
        act = d1.radio("Evaporation model", ["raoult", "hsp"], horizontal=True, key="bl_act",
                       format_func={"raoult": "ideal (Raoult)", "hsp": "Flory-Huggins with HSP"}.get,
                       help="the HSP form is rough for water and strongly hydrogen-bonded pairs")
        rh = d2.slider("Relative humidity (%)", 0, 100, 50, 5, key="bl_rh", help="acts on water only")
        path = common.call(dry, tuple(comps), tuple(fracs), temp,
                           (t.delta_d, t.delta_p, t.delta_h, t.radius, t.liquid), act, float(rh), common.lib_key())
        if path is not None:
            from lwui.drying_view import show_drying

            show_drying(path, comps)
with tab2:
    crow = lib.loc[lib["name"].isin(comps)]
    pts = [(t.name, t.hsp), ("blend", (row["delta_d"], row["delta_p"], row["delta_h"]))]
    st.plotly_chart(plots.teas_triangle([("components", crow, plots.GOOD, 6)], pts), width="stretch",
                    key="bl_teas")
with tab3:
    crow = lib.loc[lib["name"].isin(comps)]
    blend_pt = pd.DataFrame({"name": [pick], "delta_d": [row["delta_d"]], "delta_p": [row["delta_p"]],
                             "delta_h": [row["delta_h"]]})
    st.plotly_chart(plots.hsp_space_3d([("components", crow, dict(plots.BAD, color=plots.ORANGE), 6),
                                        ("blend", blend_pt, plots.GOOD, 10)],
                                       [(t.name, tuple(t.hsp), t.radius)], title="The blend and its components"),
                    width="stretch", key="bl_3d")
    st.caption("A blend's point is the volume-weighted mean of its components: two liquids outside the "
               "sphere can give a blend inside it.")
