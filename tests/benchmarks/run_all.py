"""Run every benchmark script in this folder (``bench_*.py``) one after the other.

Usage: ``python tests/benchmarks/run_all.py [name ...]`` (e.g. ``ranking`` for bench_ranking.py).
Benchmarks are not part of the test suite; they print medians beside naive baselines.
"""
from __future__ import annotations

import subprocess
import sys
from pathlib import Path

here = Path(__file__).resolve().parent
wanted = set(sys.argv[1:])
rc = 0
for script in sorted(here.glob("bench_*.py")):
    name = script.stem.removeprefix("bench_")
    if wanted and name not in wanted:
        continue
    print(f"=== {script.name}", flush=True)
    rc |= subprocess.call([sys.executable, str(script)])
sys.exit(rc)
