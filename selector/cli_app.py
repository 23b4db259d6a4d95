"""Subcommand ``app``: start the local web front end (Streamlit) on 127.0.0.1."""
from __future__ import annotations

import sys
from pathlib import Path

from .cli_common import whole_number

APP_DIR = Path(__file__).resolve().parent.parent / "app"
ENTRY = APP_DIR / "likewise_app.py"


def app_command(port: int = 8501, entry: Path | None = None) -> list[str]:
    """The ``streamlit run`` command line that serves the app on localhost only.

    >>> cmd = app_command(8600)
    >>> cmd[1:4], cmd[cmd.index("--server.address") + 1], cmd[cmd.index("--server.port") + 1]
    (['-m', 'streamlit', 'run'], '127.0.0.1', '8600')
    """
    from .errors import SelectorError

    if isinstance(port, bool) or not isinstance(port, int) or not (1 <= port <= 65535):
        raise SelectorError(f"--port must be a whole number between 1 and 65535, got {port!r}")
    entry = Path(entry) if entry is not None else ENTRY
    return [sys.executable, "-m", "streamlit", "run", str(entry),
            "--server.address", "127.0.0.1", "--server.port", str(port),
            "--server.headless", "true", "--browser.gatherUsageStats", "false",
            "--client.toolbarMode", "minimal"]


def wait_until_serving(url: str, timeout: float = 60.0, proc=None, poll: float = 0.25) -> bool:
    """Poll the Streamlit health endpoint ``url + "/_stcore/health"`` until it answers 200.

    True once the server answers; False after ``timeout`` seconds or as soon as ``proc`` (an
    optional ``subprocess.Popen`` of the server) has exited.
    """
    import time
    import urllib.request

    deadline = time.monotonic() + timeout
    while True:
        try:
            with urllib.request.urlopen(url + "/_stcore/health", timeout=2) as r:
                if r.status == 200:
                    return True
        except OSError:
            pass
        if (proc is not None and proc.poll() is not None) or time.monotonic() > deadline:
            return False
        time.sleep(poll)


def port_is_free(port: int, host: str = "127.0.0.1") -> bool:
    """True when nothing listens on ``host:port`` and it can be bound (a short-lived test bind)."""
    import socket

    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        try:
            s.bind((host, int(port)))
        except OSError:
            return False
    return True


def cmd_app(a) -> int:
    import os
    import subprocess

    from .errors import SelectorError

    if not ENTRY.exists():
        raise SelectorError(f"the web app is not installed: {ENTRY} is missing (install from the "
                            "source tree with pip install -e .)")
    cmd = app_command(a.port)
    if a.print_command:
        print(" ".join(cmd))
        return 0
    if not port_is_free(a.port):
        raise SelectorError(f"port {a.port} on 127.0.0.1 is in use (another likewise app or server?); "
                            f"stop it or choose another port, e.g. likewise app --port {a.port + 1}")
    print(f"likewise app: serving on http://127.0.0.1:{a.port} (local only; Ctrl+C stops it)",
          file=sys.stderr)
    import signal

    # the app trains the structure estimator in the background once the first page is up
    proc = subprocess.Popen(cmd, env=dict(os.environ, LIKEWISE_WARM_ESTIMATOR="1"))

    stopped = []

    def _stop(signum, frame):  # SIGTERM / SIGHUP to this command stop the server too
        stopped.append(signum)
        proc.terminate()

    old = {}
    for sig in {signal.SIGTERM, getattr(signal, "SIGHUP", signal.SIGTERM)}:
        try:
            old[sig] = signal.signal(sig, _stop)
        except ValueError:      # not the main thread (called from other code): no handler
            pass
    try:
        rc = proc.wait()
        return 0 if stopped else rc     # a requested stop is a clean exit
    except KeyboardInterrupt:   # Ctrl+C reaches the server too; the block below waits for it
        return 0
    finally:
        if proc.poll() is None:
            proc.terminate()
            try:
                proc.wait(timeout=10)
            except subprocess.TimeoutExpired:
                proc.kill()
        for s, h in old.items():
            signal.signal(s, h)


def register(sub) -> None:
    p = sub.add_parser("app", help="start the local web app (opens on the invented demo scenario)",
                       description="Serve the likewise web app on http://127.0.0.1:PORT (this "
                       "computer only). Open the address in a browser; Ctrl+C stops the server.")
    p.add_argument("--port", type=whole_number, default=8501, help="local port (default 8501)")
    p.add_argument("--print-command", action="store_true",
                   help="print the server command instead of running it")
    p.set_defaults(func=cmd_app)
