"""Interaction latency of the web app on the full library (Streamlit AppTest, no browser).

For each page an interaction is replayed several times (a widget change and the rerun it
triggers) and the median wall time printed; the target is < 1 s per interaction. Beside it, in
the same process, a naive baseline of the ranking interaction: the library re-read from CSV and
the hazard table rebuilt on every rerun (no st.cache_*), and Ra computed in a per-row Python
loop - what the page would cost without caching and vectorisation.

Then the structure estimator's warm-up as a user meets it (``likewise app`` in chromium: a SMILES
typed 20 s after the first page), beside the first estimate in a fresh process without it.

Run: ``python tests/benchmarks/bench_app.py`` (about 2 minutes; ``--no-warmup`` skips the
browser part).
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


def _cold_estimate_seconds() -> float:
    """Time of the first SMILES estimate in a fresh interpreter (it trains the model)."""
    import subprocess

    code = ("import time, selector; t = time.perf_counter(); "
            "selector.estimate('CCCCCCOC(=O)C1CCCCC1'); print(time.perf_counter() - t)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    return float(out.stdout.strip().splitlines()[-1])


def warmup_timeline(wait_s: float = 20.0) -> None:
    """``likewise app`` as a user meets it: the server is started (with the background training
    of the structure estimator, LIKEWISE_WARM_ESTIMATOR=1), a chromium page opens at once, and
    ``wait_s`` seconds after the first page is up the user types a SMILES on the Target page.
    Prints the time from start to the first page and the answer time of that first estimate
    (about the page's own run time when the training is already done). Skipped when chromium or
    playwright is missing."""
    import socket
    import subprocess

    chromium = "/usr/bin/chromium"
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        print("  (warm-up timeline skipped: playwright missing)")
        return
    if not os.path.exists(chromium):
        print("  (warm-up timeline skipped: chromium missing)")
        return
    from selector.cli_app import app_command, wait_until_serving

    with socket.socket() as so:
        so.bind(("127.0.0.1", 0))
        port = so.getsockname()[1]
    env = dict(os.environ, LIKEWISE_WARM_ESTIMATOR="1", LIKEWISE_HOME=tempfile.mkdtemp(prefix="lw_warm_"))
    t0 = time.perf_counter()
    proc = subprocess.Popen(app_command(port), env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    url = f"http://127.0.0.1:{port}"
    try:
        if not wait_until_serving(url, timeout=60, proc=proc, poll=0.2):
            raise RuntimeError("the app did not start")
        with sync_playwright() as p:
            browser = p.chromium.launch(executable_path=chromium, args=[
                "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
                "--disable-background-networking", "--disable-component-update", "--disable-sync"])
            pg = browser.new_page(viewport={"width": 1400, "height": 1100})
            pg.set_default_timeout(120_000)
            pg.goto(url)
            pg.get_by_role("heading", name="Ranked liquids", level=1).wait_for()
            t_page = time.perf_counter() - t0
            pg.wait_for_timeout(int(wait_s * 1000))
            pg.locator("[data-testid='stSidebarNav']").get_by_text("Target", exact=True).click()
            pg.get_by_role("heading", name="Target", level=1).wait_for()
            pg.get_by_role("radio", name="Estimate from a structure (SMILES)").click()   # the page's way chooser
            box = pg.get_by_label("SMILES", exact=True)
            box.fill("CCCCCCOC(=O)C1CCCCC1")   # hexyl cyclohexanecarboxylate: not in the library
            t_ask = time.perf_counter()
            pg.get_by_role("button", name="Estimate", exact=True).click()
            pg.get_by_text("90 % low").first.wait_for()
            t_answer = time.perf_counter() - t_ask
            browser.close()
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
    print(f"  likewise app: first page up after                {t_page:7.1f} s")
    print(f"  SMILES typed {wait_s:.0f} s later; estimate shown after    {t_answer:7.2f} s "
          f"(start to answer {t_page + wait_s + t_answer:.1f} s)")


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
        at.segmented_control(key="tg_way").set_value("A library liquid").run()
        at.text_input(key="tg_q").set_value(["toluene", "acetone", "ethanol", "NMP", "hexane",
                                              "2-butanone", "anisole"][i])
        at.button(key="tg_use_liq").click().run()
        at.switch_page("views/candidates.py").run()

    rows.append(("set a library target, then show its ranking (3 runs)", _median(switch_target, at=at)))

    at.switch_page("views/blends.py").run()

    def blends(i):
        at.number_input(key="bl_min").set_value(0.05 + 0.01 * i)
        at.button[[b.label for b in at.button].index("Design blends")].click().run()

    at.radio(key="bl_n").set_value(3)
    rows.append(("blend design: 3 liquids (default), full library", _median(blends, at=at)))
    at.radio(key="bl_n").set_value(2)
    rows.append(("blend design: 2 liquids, full library", _median(blends, at=at)))

    # new targets each time (nothing cached): published HSP of library liquids as targets
    names = ["toluene", "acetone", "ethanol", "NMP", "2-butanone", "anisole", "cyclohexanone"]

    blend_runs = []

    def blends_target(i):
        at.switch_page("views/target.py").run()
        at.segmented_control(key="tg_way").set_value("A library liquid").run()
        at.text_input(key="tg_q").set_value(names[i])
        at.button(key="tg_use_liq").click().run()
        t = time.perf_counter()
        at.switch_page("views/blends.py").run()   # designs 3-liquid blends for the new target
        blend_runs.append(time.perf_counter() - t)

    whole = _median(blends_target, at=at)
    rows.append(("new library target: blend page run (3 liquids)", statistics.median(blend_runs)))
    rows.append(("  ...with setting the target first (3 runs)", whole))

    at.switch_page("views/target.py").run()
    at.button(key="tg_demo").click().run()  # back to the demo sphere with its filters
    at.switch_page("views/blends.py").run()
    at.radio(key="bl_n").set_value(3)
    rows.append(("blend design: 3 liquids, demo filters (bp 100-200 C)", _median(blends, at=at)))

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

    if "--no-warmup" not in sys.argv:
        print()
        print("structure estimator warm-up (likewise app, chromium):")
        warmup_timeline()
        cold = _cold_estimate_seconds()
        print(f"  without the warm-up: first estimate in a fresh process (trains)  {cold:6.1f} s")

    cached = _median(lambda i: cached_rank_interaction())
    naive = _median(lambda i: naive_rank_interaction())
    print()
    print("ranking rerun, library calls only (same process):")
    print(f"  cached library + vectorised rank              {cached:7.4f} s")
    print(f"  naive: re-read CSV + hazards + per-row loop   {naive:7.4f} s")
    print(f"  ratio naive / cached                          {naive / cached:7.1f} x")


if __name__ == "__main__":
    main()
