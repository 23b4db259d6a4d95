"""Sphere from lab tests: fit a solute's Hansen sphere from good/bad (or graded) solvent tests."""
import io

import pandas as pd
import streamlit as st

import selector
from lwui import common, plots
from selector.library import PARAMETERS_DIR

st.title("Sphere from lab tests")
st.caption("Enter each solvent you tested and whether it dissolved (or swelled) the solute. The fit "
           "finds the centre and R0 that classify most results right (Hansen's handbook, ch. 1), "
           "with bootstrap intervals. Scores 1-6 may be given instead of yes/no (higher = better).")
mod = common.capability("spheres")
if mod is None:
    st.stop()

DEMO = PARAMETERS_DIR / "demo" / "lab_tests.csv"


@st.cache_data(show_spinner=False)
def demo_tests():
    return pd.read_csv(DEMO)


@st.cache_resource(show_spinner="Fitting the sphere…", max_entries=32)
def fit(csv_text, bootstrap, seed, threshold, two):
    try:
        df = pd.read_csv(io.StringIO(csv_text))
    except (pd.errors.ParserError, pd.errors.EmptyDataError) as e:
        raise selector.SelectorError(f"the lab-test table is not readable: {str(e).splitlines()[0]}") from None
    if threshold is not None:
        df = df.drop(columns=[c for c in df.columns if c.lower() in ("dissolved", "outcome", "result", "good")])
    return selector.fit_sphere(df, seed=seed, bootstrap=bootstrap, threshold=threshold, two_spheres=two,
                               library=common.library())


src = st.radio("Lab results", ["Invented demo results", "Upload a CSV", "Type them in"], horizontal=True,
               key="sp_src")
if src == "Invented demo results":
    st.info("**Invented demo data** for the invented FV-3 resin - not measured results. They agree with "
            "the scenario's sphere (17.9, 6.1, 6.4, R0 8.6); the fit finds the tightest sphere that "
            "separates them, and its intervals hold the scenario's.", icon=":material/science:")
    base = demo_tests()
elif src == "Upload a CSV":
    up = st.file_uploader("CSV with columns solvent and dissolved (true/false) or score", type=["csv", "txt"],
                          key="sp_up")
    base = None
    if up is not None:
        try:
            from selector.io import read_user_csv
            from selector.spheres import normalise_test_columns

            # UTF-8 or Windows-1252, comma/semicolon/tab, decimal commas; dD/δD... headers accepted
            from selector.spheres import test_columns_problem

            base = normalise_test_columns(read_user_csv(up))
            problem = test_columns_problem(base, common.library()) if len(base) else "the file has no rows"
            if problem:
                raise ValueError(f"{up.name}: {problem}")
        except (ValueError, pd.errors.ParserError, UnicodeDecodeError) as e:
            first = str(e).splitlines()[0]
            common.show_error(first if up.name in first else f"Could not read {up.name}: {first}")
            base = None
    if base is None:
        from selector.io import to_csv_text

        st.download_button("Template CSV", to_csv_text(pd.DataFrame({
            "solvent": ["toluene", "ethanol", "toluene [60] & ethanol [40]"], "dissolved": [True, False, True],
            "score": [None, None, None]})), file_name="lab_tests_template.csv", mime="text/csv",
            key="sp_tpl", on_click="ignore")
        st.stop()
else:
    base = pd.DataFrame({"solvent": ["toluene", "acetone", "ethanol", "hexane"],
                         "dissolved": [True, True, False, False]})

tests = st.data_editor(base, num_rows="dynamic", width="stretch", key=f"sp_ed_{src}",
                       column_config={"solvent": st.column_config.TextColumn("solvent", help="name, CAS or SMILES"),
                                      "dissolved": st.column_config.CheckboxColumn("dissolved"),
                                      "score": st.column_config.NumberColumn("score", help="graded result, optional")})
c1, c2, c3, c4 = st.columns(4)
from selector.spheres import DEFAULT_BOOTSTRAP

boot = c1.select_slider("Bootstrap resamples (for the intervals)", sorted({0, 25, 50, 100, 200, DEFAULT_BOOTSTRAP}),
                        value=DEFAULT_BOOTSTRAP, key="sp_boot",
                        help="fewer is faster, but the intervals and the shares below then move from seed to seed")
seed = c2.number_input("Random seed", value=0, step=1, key="sp_seed", help="a whole number of 0 or more")
graded = c3.checkbox("Grades in the score column", value=False, key="sp_graded",
                     help="grade at or above the pass mark counts as good; higher grades = further inside")
thr = c3.number_input("Pass mark", value=4.0, step=0.5, key="sp_thr", disabled=not graded)
two = c4.checkbox("Allow two spheres", value=False, key="sp_two",
                  help="for block copolymers and surfactants; adopted only when the BIC says so")
res = common.call(fit, tests.dropna(how="all").to_csv(index=False), int(boot), int(seed),
                  float(thr) if graded else None, bool(two))
if res is None:
    st.stop()

_label = "demo results (invented)" if src.startswith("Invented") else "your lab results"
st.session_state["lw_fit"] = {"name": "fitted sphere", "delta_d": float(res.delta_d), "delta_p": float(res.delta_p),
                              "delta_h": float(res.delta_h), "radius": float(res.radius),
                              "source": f"fitted to {_label}"}
m = st.columns(5)
m[0].metric("dD (MPa½)", f"{res.delta_d:.1f}")
m[1].metric("dP (MPa½)", f"{res.delta_p:.1f}")
m[2].metric("dH (MPa½)", f"{res.delta_h:.1f}")
m[3].metric("R0 (MPa½)", f"{res.radius:.1f}")
m[4].metric("Fit score (1 = all right)", f"{res.score:.3f}")
st.markdown(f"<div id='lw-fit'>Fitted sphere: dD {res.delta_d:.2f}, dP {res.delta_p:.2f}, "
            f"dH {res.delta_h:.2f}, R0 {res.radius:.2f} MPa½</div>", unsafe_allow_html=True)
if hasattr(res, "surface_note") and res.surface_note():
    st.caption(res.surface_note() + ".")
for w in getattr(res, "warnings", []) or []:
    st.warning(common.ui_units(w))
iv = getattr(res, "intervals", None) or {}
if iv:
    st.markdown("**Intervals** (bootstrap and profile region combined)")
    names = {"delta_d": "dD (MPa½)", "delta_p": "dP (MPa½)", "delta_h": "dH (MPa½)", "radius": "R0 (MPa½)"}
    vals = {"delta_d": res.delta_d, "delta_p": res.delta_p, "delta_h": res.delta_h, "radius": res.radius}
    st.table(pd.DataFrame([{"parameter": names.get(k, k), "fitted": f"{vals[k]:.2f}" if k in vals else "",
                            "low": f"{v[0]:.2f}", "high": f"{v[1]:.2f}"} for k, v in iv.items()])
             .set_index("parameter"))
common.show_flash()
if st.button("Use this sphere as the target", key="sp_use", type="primary"):
    common.set_target_and_rerun(dict(st.session_state["lw_fit"], kind="fitted"),
                                "The fitted sphere is now the target for the ranking and blend pages.")

mis = getattr(res, "misfits", None)
if isinstance(mis, pd.DataFrame):
    st.markdown(f"**Results the sphere gets wrong:** {len(mis)}")
    if len(mis):
        common.table(mis, hide_index=True, width="stretch")

st.subheader("Suggested next tests")
st.caption("Liquids whose result would tell the most about the sphere's edge.")
nxt = common.call(res.suggest_tests, 5)
if nxt is not None:
    first = [c for c in ("name", "hazard_class", "red", "p_inside", "information") if c in nxt.columns]
    common.table(nxt[first + [c for c in nxt.columns if c not in first]], hide_index=True, width="stretch",
                 column_config=common.COLUMN_CONFIG)
    for note in nxt.attrs.get("notes", []):
        st.caption(common.ui_units(note))
    lib = common.library()
    if "name" in getattr(nxt, "columns", []):
        common.cautions(lib.loc[lib["name"].isin(nxt["name"])], title="Safety notes for the suggested tests")

from selector.report import build_report

rep_in = {"tests": len(res.tests), "bootstrap resamples": int(boot), "seed": int(seed),
          "graded": f"pass mark {thr:g}" if graded else "no", "two spheres allowed": bool(two),
          "fit score": res.score}
summ = res.summary() if hasattr(res, "summary") else None
kw = dict(target=selector.Target(res.delta_d, res.delta_p, res.delta_h, res.radius, name="fitted sphere",
                                 source="fitted to " + ("INVENTED demo results" if src.startswith("Invented")
                                                        else "your lab results")),
          inputs=rep_in, table=summ, liquids=None if nxt is None else nxt,
          notes=list(getattr(res, "warnings", []) or []) + (
              ["Suggested next tests: " + ", ".join(nxt["name"])] if nxt is not None and "name" in nxt else []),
          sources=["Sphere fit: classical desirability (Hansen's handbook, 2nd ed., 2007, ch. 1) as implemented "
                   "in selector.spheres; intervals by bootstrap and the profile region."])
from selector.io import to_csv_text

c1, c2, c3 = st.columns(3)
c1.download_button("Fitted sphere (CSV)", to_csv_text(summ) if summ is not None else "", file_name="sphere.csv",
                   mime="text/csv", key="sp_csv", on_click="ignore")
c2.download_button("Report (Markdown)", build_report("Sphere from lab tests", **kw), file_name="sphere_report.md",
                   mime="text/markdown", key="sp_md", on_click="ignore")
c3.download_button("Printable report (HTML)", build_report("Sphere from lab tests", fmt="html", **kw),
                   file_name="sphere_report.html", mime="text/html", key="sp_html", on_click="ignore")

lib = common.library()
tested = getattr(res, "tests", None)
if not isinstance(tested, pd.DataFrame) or not {"delta_d", "good"} <= set(tested.columns):
    tested = None
elif "name" not in tested.columns:
    tested = tested.rename(columns={"label": "name"})
spheres = [(f"sphere {i + 1}", (s.delta_d, s.delta_p, s.delta_h), s.radius)
           for i, s in enumerate(getattr(res, "spheres", []) or [])] or \
          [("fitted sphere", (res.delta_d, res.delta_p, res.delta_h), res.radius)]
if tested is not None:
    groups = [("good", tested.loc[tested["good"].astype(bool)], plots.GOOD, 6),
              ("bad", tested.loc[~tested["good"].astype(bool)], plots.BAD, 6)]
    t1, t2 = st.tabs(["3-D Hansen space", "2-D projections"])
    with t1:
        st.plotly_chart(plots.hsp_space_3d(groups, spheres), width="stretch", key="sp_3d")
    with t2:
        st.plotly_chart(plots.projections_2d(groups, spheres), width="stretch", key="sp_2d")
