"""Benchmark: ranking the full library, RED of a million candidates, command-line cold start.

Run: ``python tests/benchmarks/bench_ranking.py``. Prints medians beside a naive per-row Python
loop run in the same process, and the ratio. Issue figures: ranking with filters <= 20 ms;
RED of 1,000,000 synthetic candidates <= 0.2 s; command-line ranking cold start <= 1.5 s.
"""
from __future__ import annotations

import math
import statistics
import subprocess
import sys
import time

import numpy as np

import selector
from selector.hansen import red

TARGET = (17.9, 6.1, 6.4, 8.6)  # invented demo resin
FILTERS = dict(boiling_point_c=(80, 220), min_flash_point_c=20, exclude=["toluene"])


def median_time(fn, repeat=15):
    ts = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        ts.append(time.perf_counter() - t)
    return statistics.median(ts)


def naive_rank(lib, target, bp=(80, 220), min_flash=20, exclude=("toluene",)):
    """Per-row Python loop: filter (reagents out, non-flammable liquids pass the flash minimum),
    Ra, RED, polarity match, sort."""
    from selector.cautions import _not_flammable_cas

    nonflam = set(_not_flammable_cas())
    d0, p0, h0, r0 = target
    t2 = d0 * d0 + p0 * p0 + h0 * h0
    e0 = (d0 * d0 / t2, p0 * p0 / t2, h0 * h0 / t2)
    rows = []
    for r in lib.to_dict(orient="records"):
        if r["name"] in exclude or not (bp[0] <= r["boiling_point_c"] <= bp[1]):
            continue
        if isinstance(r["reactive_reason"], str) and r["reactive_reason"]:
            continue
        if not (r["flash_point_c"] >= min_flash or (r["cas"] in nonflam and math.isnan(r["flash_point_c"]))):
            continue
        dd, dp, dh = r["delta_d"], r["delta_p"], r["delta_h"]
        ra_ = math.sqrt(4 * (dd - d0) ** 2 + (dp - p0) ** 2 + (dh - h0) ** 2)
        s2 = dd * dd + dp * dp + dh * dh
        pm = 1 - 0.5 * (abs(dd * dd / s2 - e0[0]) + abs(dp * dp / s2 - e0[1]) + abs(dh * dh / s2 - e0[2]))
        rows.append((ra_ / r0 + 0.3 * (1 - pm), r["molar_volume"], r["name"], ra_, ra_ / r0, pm))
    rows.sort()
    return rows


def main() -> None:
    lib = selector.load_library()
    selector.rank(TARGET, library=lib, **FILTERS)  # warm caches
    t_fast = median_time(lambda: selector.rank(TARGET, library=lib, **FILTERS))
    t_naive = median_time(lambda: naive_rank(lib, TARGET), repeat=7)
    fast_names = selector.rank(TARGET, library=lib, polarity_weight=0.3, **FILTERS)["name"].head(10).tolist()
    naive_names = [r[2] for r in naive_rank(lib, TARGET)[:10]]
    print(f"rank full library ({len(lib)} liquids) with filters: median {t_fast * 1e3:.2f} ms "
          f"(goal <= 20 ms); naive loop {t_naive * 1e3:.2f} ms; ratio {t_naive / t_fast:.1f}x; "
          f"same top 10: {fast_names == naive_names}")

    rng = np.random.default_rng(0)
    pts = np.column_stack([rng.uniform(12, 22, 1_000_000), rng.uniform(0, 25, 1_000_000),
                           rng.uniform(0, 40, 1_000_000)])
    t_red = median_time(lambda: red(pts, TARGET[:3], TARGET[3]), repeat=9)
    sub = pts[:20_000].tolist()

    def loop():
        d0, p0, h0, r0 = TARGET
        return [math.sqrt(4 * (a - d0) ** 2 + (b - p0) ** 2 + (c - h0) ** 2) / r0 for a, b, c in sub]

    t_loop = median_time(loop, repeat=5) * (1_000_000 / len(sub))
    print(f"RED of 1,000,000 candidates: median {t_red:.3f} s (goal <= 0.2 s); naive loop "
          f"{t_loop:.3f} s (extrapolated from 20,000); ratio {t_loop / t_red:.1f}x")

    cmd = [sys.executable, "-m", "selector", "rank", "17.9,6.1,6.4,8.6", "--bp", "80:220", "--top", "10"]
    ts = []
    for _ in range(5):
        t = time.perf_counter()
        subprocess.run(cmd, check=True, capture_output=True)
        ts.append(time.perf_counter() - t)
    bare = []
    for _ in range(5):
        t = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], check=True)
        bare.append(time.perf_counter() - t)
    print(f"command-line ranking, cold start: median {statistics.median(ts):.2f} s (goal <= 1.5 s); "
          f"bare Python start {statistics.median(bare):.2f} s")


if __name__ == "__main__":
    main()
