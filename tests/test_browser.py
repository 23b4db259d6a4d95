"""Real-browser test: the app served by Streamlit, driven by Playwright in Debian's chromium.

Skipped when /usr/bin/chromium (or Playwright) is missing, unless LIKEWISE_REQUIRE_BROWSER=1
(CI), in which case it fails. On failure a screenshot is saved to tests/artifacts/.
"""
from __future__ import annotations

import csv
import io
import os
import socket
import subprocess
from pathlib import Path

import pytest

import selector
from selector.cli_app import app_command, wait_until_serving

pytestmark = pytest.mark.browser

CHROMIUM = "/usr/bin/chromium"
ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync"]
ARTIFACTS = Path(__file__).resolve().parent / "artifacts"
# Polystyrene sphere (MPa^0.5), from memory of Hansen's handbook (2nd ed., 2007).
PS = (21.3, 5.8, 4.3, 12.7)


def _require_browser():
    why = None
    if not os.path.exists(CHROMIUM):
        why = f"{CHROMIUM} is missing"
    else:
        try:
            import playwright.sync_api  # noqa: F401
        except ImportError:
            why = "playwright is not installed"
    if why:
        if os.environ.get("LIKEWISE_REQUIRE_BROWSER") == "1":
            pytest.fail(f"browser test required (LIKEWISE_REQUIRE_BROWSER=1) but {why}")
        pytest.skip(why)


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    _require_browser()
    port = _free_port()
    env = dict(os.environ, LIKEWISE_HOME=str(tmp_path_factory.mktemp("home")))
    log = tmp_path_factory.mktemp("log") / "streamlit.log"
    with open(log, "w") as fh:
        proc = subprocess.Popen(app_command(port), env=env, stdout=fh, stderr=subprocess.STDOUT)
    url = f"http://127.0.0.1:{port}"
    if not wait_until_serving(url, timeout=60, proc=proc):
        proc.kill()
        pytest.fail("the app did not start:\n" + log.read_text()[-2000:])
    yield url
    proc.terminate()
    try:
        proc.wait(timeout=10)
    except subprocess.TimeoutExpired:
        proc.kill()


@pytest.fixture
def page(server):
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        ctx = browser.new_context(viewport={"width": 1400, "height": 1100}, accept_downloads=True)
        pg = ctx.new_page()
        pg.set_default_timeout(45_000)
        try:
            yield pg
        finally:
            browser.close()


def _settle(pg):
    """Wait until Streamlit has finished the current run."""
    pg.wait_for_timeout(300)
    pg.wait_for_function("() => !document.querySelector('[data-testid=\"stStatusWidget\"] "
                         "[data-testid=\"stStatusWidgetRunningIcon\"]')", timeout=45_000)
    pg.wait_for_timeout(300)


def _nav(pg, title):
    pg.locator("[data-testid='stSidebarNav']").get_by_text(title, exact=True).click()
    pg.get_by_role("heading", name=title, level=1).wait_for()
    _settle(pg)


def _first_row_label(pg) -> str:
    cell = pg.locator("[data-testid='stTable'] table tbody tr").first.locator("th, td").first
    cell.wait_for()
    return cell.inner_text().strip()


def test_define_target_rank_blend_and_download(page, server):
    pg = page
    try:
        pg.goto(server)
        pg.get_by_role("heading", name="Ranked liquids", level=1).wait_for()
        _settle(pg)
        assert "INVENTED" in pg.locator("[data-testid='stAlert']").first.inner_text()

        # define a target by typing the numbers
        _nav(pg, "Target")
        form = pg.get_by_test_id("stForm")
        form.get_by_label("Name", exact=True).fill("polystyrene")
        for label, v in zip(["dD (MPa½)", "dP (MPa½)", "dH (MPa½)", "R0 (MPa½)"], PS):
            form.get_by_label(label, exact=True).fill(str(v))
        form.get_by_role("button", name="Use these numbers").click()
        _settle(pg)
        pg.locator("[data-testid='stSidebar']").get_by_text("R0 12.7").wait_for()

        # the ranked table, read from the DOM, equals the library's ranking
        _nav(pg, "Ranked liquids")
        ref = selector.rank(PS)
        pg.locator("[data-testid='stTable']").get_by_text(ref["name"].iloc[0], exact=True).wait_for()
        assert _first_row_label(pg) == ref["name"].iloc[0]

        # download the CSV and check its content
        with pg.expect_download() as dl:
            pg.get_by_role("button", name="Download table (CSV)").click()
        text = Path(dl.value.path()).read_text(encoding="utf-8")
        rows = list(csv.DictReader(io.StringIO(text)))
        assert len(rows) == len(ref)
        assert [r["name"] for r in rows[:10]] == list(ref["name"].head(10))
        assert abs(float(rows[0]["red"]) - float(ref["red"].iloc[0])) < 1e-9

        # one blend design
        _nav(pg, "Blend design")
        pg.get_by_role("button", name="Design blends").click()
        _settle(pg)
        # three liquids at most: the page's default
        b = selector.find_blends(selector.Target(*PS[:3], PS[3], name="polystyrene"), max_components=3,
                                 min_fraction=0.05, temperature=25.0, top=20)
        label = " + ".join(f"{f:.0%} {c}" for c, f in zip(b["components"].iloc[0], b["fractions"].iloc[0]))
        pg.locator("[data-testid='stTable']").first.get_by_text(label, exact=True).wait_for()
        assert _first_row_label(pg) == label
        assert pg.get_by_text("safety data sheet").first.is_visible()

        # the drying path of that blend, its table opened: shown, no browser-side error (a NaN in
        # a table's metadata used to break it with "is not valid JSON")
        pg.get_by_text("Drying path table").first.click()
        _settle(pg)
        body = pg.locator("body").inner_text()
        assert "not valid JSON" not in body and "SyntaxError" not in body
        assert pg.get_by_text("evaporated_fraction").count() + pg.get_by_text("Evaporated").count() >= 1
    except BaseException:
        ARTIFACTS.mkdir(exist_ok=True)
        pg.screenshot(path=str(ARTIFACTS / "browser_failure.png"), full_page=True)
        raise
