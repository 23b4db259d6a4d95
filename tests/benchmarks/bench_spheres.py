"""Benchmark of the sphere fit (``selector.spheres``): speed, global optimum, recovery.

Run: ``python tests/benchmarks/bench_spheres.py`` (parts 1 and 2, under two minutes on 2 cores)
and ``python tests/benchmarks/bench_spheres.py --recovery`` (part 3, about as long).

1. Speed (medians over seeded cases of 40 tests drawn from the library): one-sphere fit without
   intervals, with 200-sample bootstrap intervals, and the two-sphere fit; side by side with the
   naive baseline (a fine exhaustive grid over centres, scanning every tested Ra as R0).
2. Global optimum: in 100 seeded random cases (40 tests, 5 % flipped outcomes so that the
   score surface has plateaus and local optima) the fitted objective (mean desirability loss +
   the 1e-9 R0 tie-break) must be no worse than the best point of the exhaustive grid.
3. Recovery: how the fitted centre, R0 and the interval coverage degrade with fewer tests and
   noisier outcomes (the table in the README "sphere" section comes from here).

True spheres are generated here with a fixed seed; test outcomes are the true inside/outside
verdict of real library liquids (HSP from the ``chemicals`` tables bundled in the library).
"""
from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

from selector.library import HSP
from selector.spheres import SCALE, TIE, fit_sphere, read_tests

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/ (shared seeded cases)
from sphere_cases import LIB, H, exhaustive, make_case  # noqa: E402


def objective(fit, tab):
    P = tab[HSP].to_numpy(float) * SCALE
    good = tab["good"].to_numpy(bool)
    w = tab["weight"].to_numpy(float)
    w = w / w.mean()
    d = np.sqrt(((P - fit.hsp * SCALE) ** 2).sum(-1))
    loss = np.where(good, np.maximum(d - fit.radius, 0), np.maximum(fit.radius - d, 0))
    return float((loss * w).sum() / w.sum() + TIE * fit.radius)


def timed(fn, *a, **k):
    """(wall seconds, CPU seconds of this process, result)."""
    t0, c0 = time.perf_counter(), time.process_time()
    out = fn(*a, **k)
    return time.perf_counter() - t0, time.process_time() - c0, out


def two_sphere_case(seed: int, n: int = 40):
    r = np.random.default_rng(seed)
    c1 = np.array([17.0, 3.0, 4.0])
    c2 = np.array([16.5, 10.0, 16.0])
    R1, R2 = 5.0, 5.0
    idx = r.choice(len(LIB), n, replace=False)
    d1 = np.sqrt((((H[idx] - c1) * SCALE) ** 2).sum(1))
    d2 = np.sqrt((((H[idx] - c2) * SCALE) ** 2).sum(1))
    g = (d1 < R1) | (d2 < R2)
    return pd.DataFrame({"solvent": LIB["name"].iloc[idx].to_numpy(), "outcome": g})


def main(cases_opt: int = 100, speed: bool = True) -> int:
    fit_sphere(read_tests(make_case(0)[0]), bootstrap=10)  # warm-up (imports, caches)
    if not speed:
        return recovery()
    # ---------------------------------------------------------------- speed
    t = {"one": [], "boot": [], "grid": [], "two": []}
    for s in range(7):
        tab = read_tests(make_case(100 + s, noise=0.05)[0])
        t["one"].append(timed(fit_sphere, tab, bootstrap=0, seed=s)[:2])
        t["boot"].append(timed(fit_sphere, tab, bootstrap=200, seed=s)[:2])
        t["grid"].append(timed(exhaustive, tab)[:2])
    for s in range(3):
        tab2 = read_tests(two_sphere_case(200 + s))
        t["two"].append(timed(fit_sphere, tab2, bootstrap=0, two_spheres=True, seed=s)[:2])
    med = {k: (statistics.median(a for a, _ in v), statistics.median(c for _, c in v)) for k, v in t.items()}
    print("speed, 40 tests (medians; wall clock, and CPU time of this process in brackets)")
    print(f"  one sphere (profile intervals) {med['one'][0]:7.3f} s ({med['one'][1]:.3f})  target <= 0.2 s")
    print(f"  with 200 bootstrap samples     {med['boot'][0]:7.3f} s ({med['boot'][1]:.3f})  target <= 2 s")
    print(f"  two-sphere fit                 {med['two'][0]:7.3f} s ({med['two'][1]:.3f})  target <= 5 s")
    print(f"  exhaustive grid baseline       {med['grid'][0]:7.3f} s ({med['grid'][1]:.3f})  "
          f"-> baseline / fit = {med['grid'][0] / med['one'][0]:.1f}x")
    adopted = fit_sphere(read_tests(two_sphere_case(200)), bootstrap=0, two_spheres=True)
    print(f"  two-sphere case (true: 17.0, 3.0, 4.0, R0 5 and 16.5, 10.0, 16.0, R0 5): "
          f"{len(adopted.spheres)} sphere(s) adopted;\n    " + adopted.describe().replace("\n", "\n    "))
    # ---------------------------------------------------------------- global optimum
    worse, gap = 0, []
    for s in range(cases_opt):
        tab = read_tests(make_case(1000 + s, noise=0.05)[0])
        fit = fit_sphere(tab, bootstrap=0, seed=s)
        fg, cg, rg = exhaustive(tab)
        ff = objective(fit, tab)
        gap.append(fg - ff)
        if ff > fg + 1e-9:
            worse += 1
            print(f"  case {s}: fit {ff:.6f} worse than grid {fg:.6f} (grid centre {cg.round(2)}, R0 {rg:.2f})")
    print(f"global optimum: fit at least as good as the exhaustive grid in {cases_opt - worse}/{cases_opt} "
          f"cases; median (grid - fit) objective {statistics.median(gap):.2e}")
    return 1 if worse else 0


def active_vs_random(cases: int = 3) -> None:
    """Interval widths after 20 random tests, plus 20 more random ones, or plus 4 rounds of the
    5 liquids proposed by ``suggest_tests``."""
    names = LIB["name"].to_numpy()
    keys = ["delta_d", "delta_p", "delta_h", "radius"]
    print("\nnext-test planning: median interval width dD/dP/dH/R0 (MPa^0.5), "
          f"{cases} seeded true spheres")
    res = {"20 random": [], "+20 random": [], "+20 suggested (4 x 5)": []}
    for seed in range(cases):
        r = np.random.default_rng(900 + seed)
        c = np.array([r.uniform(16, 19), r.uniform(4, 10), r.uniform(4, 10)])
        R = r.uniform(7, 9)

        def fit(idx, s=0):
            idx = np.asarray(idx)
            g = np.sqrt((((H[idx] - c) * SCALE) ** 2).sum(1)) < R
            return fit_sphere(pd.DataFrame({"solvent": names[idx], "outcome": g}), bootstrap=30, seed=s)

        base = list(r.choice(len(LIB), 20, replace=False))
        rnd = base + list(r.choice(np.setdiff1d(np.arange(len(LIB)), base), 20, replace=False))
        act = list(base)
        for k in range(4):
            s = fit(act, k).suggest_tests(5)
            act += [int(np.flatnonzero(names == n)[0]) for n in s["name"]]
        for lab, idx in zip(res, (base, rnd, act)):
            f = fit(idx)
            res[lab].append([f.intervals[k][1] - f.intervals[k][0] for k in keys])
    for lab, v in res.items():
        print(f"  {lab:24s} " + "/".join(f"{x:.1f}" for x in np.median(np.array(v), axis=0)))


def recovery() -> int:
    """Recovery table: centre/R0 error, interval coverage and width against tests and noise."""
    active_vs_random()
    print("\nrecovery (12 seeded cases each; bootstrap 40; coverage = share of cases whose true "
          "value lies inside the reported interval, per parameter)")
    print("| tests | flipped | median centre error (Ra, MPa^0.5) | median R0 error | coverage dD/dP/dH/R0 "
          "| median interval width dD/dP/dH/R0 (MPa^0.5) |")
    print("|---|---|---|---|---|---|")
    for n in (20, 40, 80):
        for noise in (0.0, 0.05, 0.10):
            errs, rerr, cov, wid = [], [], np.zeros(4), []
            for s in range(12):
                df, c, R = make_case(5000 + 100 * n + s, n=n, noise=noise)
                fit = fit_sphere(df, bootstrap=40, seed=s)
                errs.append(float(np.sqrt((((fit.hsp - c) * SCALE) ** 2).sum())))
                rerr.append(abs(fit.radius - R) / R)
                wid.append([fit.intervals[k][1] - fit.intervals[k][0] for k in ["delta_d", "delta_p", "delta_h", "radius"]])
                for j, (k, tv) in enumerate(zip(["delta_d", "delta_p", "delta_h", "radius"], [*c, R])):
                    lo, hi = fit.intervals[k]
                    cov[j] += lo <= tv <= hi
            cov = cov / 12 * 100
            print(f"| {n} | {noise * 100:.0f} % | {statistics.median(errs):.2f} | "
                  f"{statistics.median(rerr) * 100:.0f} % | "
                  + "/".join(f"{v:.0f}" for v in cov) + " % | "
                  + "/".join(f"{v:.1f}" for v in np.median(np.array(wid), axis=0)) + " |")
    return 0


if __name__ == "__main__":
    if "--recovery" in sys.argv:
        sys.exit(main(speed=False))
    sys.exit(main(int(sys.argv[1]) if len(sys.argv) > 1 else 100))
