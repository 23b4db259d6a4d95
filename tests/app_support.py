"""Shared helpers of the AppTest suites (tests/test_app.py, tests/test_app_prices.py)."""
from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
ENTRY = str(ROOT / "app" / "likewise_app.py")
# Polystyrene sphere (dD 21.3, dP 5.8, dH 4.3, R0 12.7 MPa^0.5), from memory of Hansen's
# handbook (2nd ed., 2007), as in tests/test_ranking.py.
PS = (21.3, 5.8, 4.3, 12.7)


def start_app(home, monkeypatch=None):
    """The app started once with ``LIKEWISE_HOME`` set to ``home`` (a fresh user folder)."""
    from streamlit.testing.v1 import AppTest

    if monkeypatch is not None:
        monkeypatch.setenv("LIKEWISE_HOME", str(home))
    a = AppTest.from_file(ENTRY, default_timeout=60)
    a.run()
    assert not a.exception, [e.value for e in a.exception]
    return a


def go(at, page: str):
    """Switch to ``app/views/<page>.py`` and run it; no exception allowed."""
    at.switch_page(f"views/{page}.py").run()
    assert not at.exception, [e.value for e in at.exception]
    return at


def plain_errors(at):
    """Error messages as plain text (the page backslash-escapes Markdown characters)."""
    return [re.sub(r"\\(.)", r"\1", e.value) for e in at.error]
