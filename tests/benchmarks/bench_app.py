"""Interaction latency of the web app on the full library (Streamlit AppTest, no browser).

For each page an interaction is replayed several times (a widget change and the rerun it
triggers) and the median wall time printed; the target is < 1 s per interaction. Beside it, in
the same process, a naive baseline of the ranking interaction: the library re-read from CSV and
the hazard table rebuilt on every rerun (no st.cache_*), and Ra computed in a per-row Python
loop - what the page would cost without caching and vectorisation.

Run: ``python tests/benchmarks/bench_app.py`` (about a minute).
"""
from __future__ import annotations

import math
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
ENTRY = str(ROOT / "app" / "likewise_app.py")
REPEAT = 7


def _median(fn, repeat=REPEAT, at=None):
    ts = []
    for i in range(repeat):
        t = time.perf_counter()
        fn(i)
        ts.append(time.perf_counter() - t)
        if at is not None and (at.exception or at.error):
            raise RuntimeError(f"{fn.__name__}: " + "; ".join(str(e.value) for e in [*at.exception, *at.error]))
    return statistics.median(ts)


def naive_rank_interaction(target=(17.9, 6.1, 6.4, 8.6)):
    """Uncached, per-row ranking: what one rerun of the ranking page would cost naively."""
    import pandas as pd

    from selector.hazards import hazard_table
    from selector.library import LIBRARY_CSV

    lib = pd.read_csv(LIBRARY_CSV, keep_default_na=False, na_values=[""], dtype={"cas": str})
    lib["sources_disagree"] = lib["sources_disagree"].astype(str).str.lower() == "true"
    lib["origin"] = "library"
    for c in ("name", "cas", "smiles", "synonyms"):
        lib[c] = lib[c].fillna("").astype(str)
    hazard_table(lib)
    rows = []
    for r in lib.itertuples():
        bp, fp = r.boiling_point_c, r.flash_point_c
        if not (100 <= bp <= 200) or not (fp >= 23):
            continue
        ra = math.sqrt(4 * (r.delta_d - target[0]) ** 2 + (r.delta_p - target[1]) ** 2
                       + (r.delta_h - target[2]) ** 2)
        rows.append((ra / target[3], r.name))
    rows.sort()
    return rows


def cached_rank_interaction():
    """The calls the ranking page makes on a rerun (library and hazards cached)."""
    import selector
    from selector.hazards import hazard_columns

    lib = selector.load_library()
    res = selector.rank((17.9, 6.1, 6.4, 8.6), library=lib, boiling_point_c=(100, 200),
                        min_flash_point_c=23)
    hz = hazard_columns(lib)
    return res, hz


def main() -> None:
    os.environ["LIKEWISE_HOME"] = tempfile.mkdtemp(prefix="likewise_bench_")
    sys.path.insert(0, str(ROOT / "app"))
    from streamlit.testing.v1 import AppTest

    print("likewise web app: interaction latency on the full library (median of "
          f"{REPEAT}; target < 1 s)")
    at = AppTest.from_file(ENTRY, default_timeout=120)
    t = time.perf_counter()
    at.run()
    print(f"  first load (cold caches)                          {time.perf_counter() - t:7.3f} s")
    assert not at.exception, [e.value for e in at.exception]

    rows = []

    def rank_filter(i):
        at.number_input(key="rank_fp").set_value(20.0 + i).run()

    rows.append(("ranked liquids: change the flash-point filter", _median(rank_filter, at=at)))

    def rank_weight(i):
        at.slider(key="rank_w").set_value(round(0.1 + 0.05 * i, 2)).run()

    rows.append(("ranked liquids: change the polarity weight", _median(rank_weight, at=at)))

    def switch_target(i):
        at.switch_page("views/target.py").run()
        at.text_input(key="tg_q").set_value(["toluene", "acetone", "ethanol", "NMP", "hexane",
                                              "2-butanone", "anisole"][i])
        at.button(key="tg_use_liq").click().run()
        at.switch_page("views/candidates.py").run()

    rows.append(("set a library target, then show its ranking (3 runs)", _median(switch_target, at=at)))

    at.switch_page("views/blends.py").run()

    def blends(i):
        at.number_input(key="bl_min").set_value(0.05 + 0.01 * i)
        at.button[[b.label for b in at.button].index("Design blends")].click().run()

    rows.append(("blend design: 2 liquids, full library", _median(blends, at=at)))

    at.switch_page("views/target.py").run()
    at.button(key="tg_demo").click().run()  # back to the demo sphere with its filters
    at.switch_page("views/blends.py").run()
    at.radio(key="bl_n").set_value(3)

    def blends3(i):
        at.number_input(key="bl_min").set_value(0.05 + 0.01 * i)
        at.button[[b.label for b in at.button].index("Design blends")].click().run()

    rows.append(("blend design: 3 liquids, demo filters (bp 100-200 C)", _median(blends3, repeat=3, at=at)))

    at.switch_page("views/mixing.py").run()
    pairs = [("water", "1-butanol"), ("hexane", "methanol"), ("water", "ethyl acetate"),
             ("acetone", "hexane"), ("water", "toluene"), ("ethanol", "hexadecane"), ("water", "2-butanone")]

    def mixing(i):
        at.selectbox(key="mx_a").set_value(pairs[i][0])
        at.selectbox(key="mx_b").set_value(pairs[i][1]).run()

    rows.append(("miscibility: new pair with phase diagram", _median(mixing, at=at)))

    at.switch_page("views/sphere.py").run()

    def sphere(i):
        at.number_input(key="sp_seed").set_value(i + 1).run()

    rows.append(("sphere fit: new seed, 100 bootstrap resamples", _median(sphere, at=at)))

    for label, m in rows:
        flag = "" if m < 1.0 else "  (over 1 s)"
        print(f"  {label:54s} {m:7.3f} s{flag}")

    cached = _median(lambda i: cached_rank_interaction())
    naive = _median(lambda i: naive_rank_interaction())
    print()
    print("ranking rerun, library calls only (same process):")
    print(f"  cached library + vectorised rank              {cached:7.4f} s")
    print(f"  naive: re-read CSV + hazards + per-row loop   {naive:7.4f} s")
    print(f"  ratio naive / cached                          {naive / cached:7.1f} x")


if __name__ == "__main__":
    main()
