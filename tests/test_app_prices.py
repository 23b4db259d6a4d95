"""The Blend design page with a price list, with Streamlit's AppTest.

The page must show what :func:`selector.find_blends` computes with the same prices; the check
values come from that library call, never from numbers written here. The prices below are
arbitrary figures made up for the tests (no real supplier's prices, no currency): they only have
to differ from liquid to liquid so that a cost-versus-Ra front exists.
"""
from __future__ import annotations


import numpy as np
import pandas as pd
import pytest

import selector
from selector.blends import blend_labels

pytest.importorskip("streamlit.testing.v1")

from app_support import PS, go, plain_errors as errors, start_app  # noqa: E402
pytestmark = pytest.mark.skipif(not __import__("importlib").util.find_spec("selector.blends"),
                                reason="selector.blends not installed")

# Arbitrary prices per litre (see the module doc). "MEK" is the trade name of 2-butanone (common
# practice), so the library matches it by synonym and says so.
PER_LITRE = {"toluene": 3.0, "o-xylene": 2.0, "butyl acetate": 4.0, "ethanol": 1.0, "acetone": 1.5,
             "cyclohexanone": 5.0, "MEK": 2.0}
# Arbitrary prices per kg, typed in the page's table.
PER_KG = {"toluene": 2.5, "ethyl acetate": 1.8, "1-butanol": 2.2, "cyclohexanone": 4.0}


def csv_bytes(prices: dict, basis: str = "cost_per_litre") -> bytes:
    return ("name," + basis + "\n" + "".join(f"{n},{'' if v is None else v}\n" for n, v in prices.items())).encode()


# ---------------------------------------------------------------- fixtures

@pytest.fixture
def at(tmp_path, monkeypatch):
    return start_app(tmp_path, monkeypatch)


def blends_page_for_polystyrene(at):
    """The Blend design page for the typed polystyrene sphere (the Target page's typed numbers)."""
    go(at, "target")
    at.segmented_control(key="tg_way").set_value("Type the numbers").run()
    at.text_input(key="tg_name").set_value("polystyrene")
    nums = [n for n in at.number_input if n.label.startswith(("dD", "dP", "dH", "R0 (MPa"))]
    for n, v in zip(nums[:4], PS):
        n.set_value(float(v))
    at.button[[b.label for b in at.button].index("Use these numbers")].click().run()
    assert not at.exception
    return go(at, "blends")


def reference(**prices):
    """What the page must show: the library call with the page's default settings."""
    return selector.find_blends(selector.Target(*PS[:3], PS[3], name="polystyrene"), max_components=3,
                                min_fraction=0.05, temperature=25.0, top=20, **prices)


def type_prices(at, prices: dict, basis: str):
    """Prices typed in the page's table (the editor's state, as the browser sends it)."""
    if not at.toggle(key="bl_typed").value:
        at.toggle(key="bl_typed").set_value(True).run()
    at.radio(key="bl_basis").set_value(basis)
    at.session_state["bl_price_tab"] = {"edited_rows": {}, "deleted_rows": [],
                                        "added_rows": [{"name": n, "price": v} for n, v in prices.items()]}
    at.run()
    assert not at.exception, [e.value for e in at.exception]


def blend_tables(at) -> list[pd.DataFrame]:
    """The page's tables of blends: the full table, then the whole front (when priced); not the
    price editor or the safety table."""
    return [d.value for d in at.dataframe if "blend" in d.value.columns]


def front_line(at) -> str:
    lines = [m.value for m in at.markdown if "Cost-versus-Ra front" in m.value]
    assert len(lines) == 1, lines
    return lines[0]


def assert_rows_equal(shown: pd.DataFrame, ref: pd.DataFrame, basis: str):
    assert list(shown["blend"]) == blend_labels(ref, "volume", digits=0)
    for c in ("ra", "cost_per_litre", "cost_per_kg"):
        np.testing.assert_allclose(shown[c].to_numpy(float), ref[c].to_numpy(float), rtol=1e-9, equal_nan=True)
    assert list(shown["pareto"]) == list(ref["pareto"])
    # a front row is beaten by no row shown on both Ra and cost (definition of a Pareto front)
    ra, cost = shown["ra"].to_numpy(float), shown[basis].to_numpy(float)
    for i in np.flatnonzero(shown["pareto"].to_numpy(bool)):
        beaten = (ra <= ra[i]) & (cost <= cost[i]) & ((ra < ra[i]) | (cost < cost[i]))
        assert not beaten.any(), shown.iloc[i]


# ---------------------------------------------------------------- tests

def test_priced_page_rows_equal_find_blends(at):
    blends_page_for_polystyrene(at)
    at.file_uploader(key="bl_prices").upload("prices.csv", csv_bytes(PER_LITRE), "text/csv").run()
    assert not at.exception and not errors(at)
    ref = reference(cost_per_litre=PER_LITRE)
    shown = blend_tables(at)[0]
    assert_rows_equal(shown, ref, "cost_per_litre")
    # only priced liquids are candidates (MEK = 2-butanone, common practice)
    priced = (set(PER_LITRE) - {"MEK"}) | {"2-butanone"}
    assert {c for cs in ref["components"] for c in cs} <= priced
    # the best five carry the cost, as the full table has it
    top = at.table[0].value
    assert list(top["Cost per litre"]) == [f"{v:.2f}" for v in ref["cost_per_litre"].head(5)]
    # the library's notes (here: the synonym match) are captions; the currency is the user's own
    caps = [c.value for c in at.caption]
    assert ref.attrs["price_notes"] and all(any(n in c for c in caps) for n in ref.attrs["price_notes"])
    assert any("in your own currency" in c for c in caps)
    # the line on the front names the closest and the cheapest blend with the table's figures
    front = ref.attrs["pareto"]
    lab = blend_labels(front, "volume", digits=0)
    cheap = int(front["cost_per_litre"].to_numpy(float).argmin())
    line = front_line(at)
    assert f"{len(front)} blends" in line
    for i in (0, cheap):
        assert f"{lab[i]} (Ra {front['ra'].iloc[i]:.2f} MPa½, {front['cost_per_litre'].iloc[i]:.2f} per litre)" in line
    # the whole front, closest first, in the expander under the table
    whole = blend_tables(at)[1]
    assert list(whole["blend"]) == lab
    np.testing.assert_allclose(whole["cost_per_litre"].to_numpy(float), front["cost_per_litre"].to_numpy(float))
    assert any("front (CSV)" in d.proto.label for d in at.get("download_button"))


def test_typed_prices_per_kg_equal_find_blends(at):
    blends_page_for_polystyrene(at)
    type_prices(at, PER_KG, "cost_per_kg")
    assert not errors(at)
    ref = reference(cost_per_kg=pd.DataFrame({"name": list(PER_KG), "cost_per_kg": list(PER_KG.values())}))
    shown = blend_tables(at)[0]
    assert_rows_equal(shown, ref, "cost_per_kg")
    # a single liquid costs what it was priced at per kg (arithmetic)
    single = shown.loc[shown["n_components"] == 1]
    assert len(single)
    for name, cost in zip(single["blend"], single["cost_per_kg"]):
        assert cost == pytest.approx(PER_KG[name])
    assert "per kg" in front_line(at)


def test_bad_price_list_names_every_problem(at):
    blends_page_for_polystyrene(at)
    # an unknown liquid and an empty price: the page names both, under the file's name
    bad = {"unobtainium oil": 3.0, "toluene": None}
    at.file_uploader(key="bl_prices").upload("bad.csv", csv_bytes(bad), "text/csv").run()
    assert not at.exception
    with pytest.raises(selector.SelectorError) as lib_err:
        reference(cost_per_litre=pd.DataFrame({"name": list(bad), "cost_per_litre": list(bad.values())}))
    problems = lib_err.value.problems
    assert len(problems) == 2
    shown = errors(at)
    assert len(shown) == 1 and shown[0].startswith("the price list bad.csv: 2 problems")
    assert all(p in shown[0] for p in problems)
    assert "unobtainium oil" in shown[0] and "no price for 'toluene'" in shown[0]
    assert not blend_tables(at)               # no table from a list with problems
    # a file without a price column is answered by the library's reader, naming what it found
    at.file_uploader(key="bl_prices").upload("header.csv", b"name,price\ntoluene,3\n", "text/csv").run()
    assert not at.exception
    assert any("the price list header.csv needs columns name and one of cost_per_litre, cost_per_kg "
               "(found name, price)" in e for e in errors(at))
    # a per-litre file and prices typed per kg cannot be mixed
    at.file_uploader(key="bl_prices").upload("prices.csv", csv_bytes(PER_LITRE), "text/csv").run()
    type_prices(at, {"water": 0.5}, "cost_per_kg")
    assert any("gives prices per litre and the typed prices are per kg" in e for e in errors(at))


def test_page_without_prices_is_unchanged(at):
    blends_page_for_polystyrene(at)
    ref = reference()
    assert "pareto" not in ref.columns

    def assert_unpriced():
        assert not at.exception and not errors(at)
        shown = blend_tables(at)[0]
        assert list(shown["blend"]) == blend_labels(ref, "volume", digits=0)
        np.testing.assert_allclose(shown["ra"].to_numpy(float), ref["ra"].to_numpy(float))
        assert not {"cost_per_litre", "cost_per_kg", "pareto"} & set(shown.columns)
        assert "Cost per litre" not in at.table[0].value.columns
        assert len(blend_tables(at)) == 1
        assert not [m for m in at.markdown if "Cost-versus-Ra front" in m.value]
        assert not [c for c in at.caption if c.value.startswith("Prices:")]

    assert_unpriced()
    # the typed table opened but left empty (a blank row too) prices nothing
    type_prices(at, {}, "cost_per_litre")
    at.session_state["bl_price_tab"] = {"edited_rows": {}, "deleted_rows": [],
                                        "added_rows": [{"name": "", "price": None}]}
    at.run()
    assert_unpriced()
    at.toggle(key="bl_typed").set_value(False).run()
    # a price list uploaded, then removed: the page goes back to the unpriced design
    at.file_uploader(key="bl_prices").upload("prices.csv", csv_bytes(PER_LITRE), "text/csv").run()
    assert "pareto" in blend_tables(at)[0].columns
    at.file_uploader(key="bl_prices").set_value(None).run()
    assert_unpriced()
