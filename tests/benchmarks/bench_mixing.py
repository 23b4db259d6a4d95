"""Benchmark of selector.mixing: whole-library state matrix and one pair with its binodal.

Run: ``python tests/benchmarks/bench_mixing.py``. Prints medians and the ratio against a naive
baseline run side by side in the same process:

* matrix: :func:`selector.mixing.state_matrix` over the whole library (n x n pairs, chi, chi_c,
  binodal of every pair with a gap, three-way state) against a per-pair Python loop calling
  :func:`selector.mixing.miscibility` (timed on a random sample of pairs and scaled to all
  n (n - 1) / 2 pairs, since the full loop would take tens of minutes);
* one pair: :func:`selector.mixing.miscibility` (state, chi, UCST, binodal, spinodal) against
  a naive version that copies the library, looks both liquids up and solves the binodal with
  scipy.optimize.fsolve in plain volume fractions.
* a new pair (the UNIFAC second opinion not cached yet), with and without that second opinion,
  and the UNIFAC split itself against thermo's GE evaluated one composition at a time.
* the square grid of 400 liquids written as CSV by the command line's writer (``emit``), against
  the same writer given the matrix with its ``attrs`` (thousands of reacting pairs), which pandas
  deep-copies on every column access; the writer now drops them first.
Targets: matrix <= 2 s, one pair <= 10 ms.
"""
from __future__ import annotations

import statistics
import time

import numpy as np


def _median_time(fn, repeat):
    ts = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        ts.append(time.perf_counter() - t)
    return statistics.median(ts)


def naive_pair(a, b):
    from scipy.optimize import fsolve

    from selector.library import find_liquid, load_library
    from selector.mixing import HBOND, critical_chi, site_strengths

    lib = load_library()
    r1, r2 = find_liquid(a, lib), find_liquid(b, lib)
    s = site_strengths([r1.smiles, r2.smiles])
    a12 = HBOND.interaction([r1.delta_d, r1.delta_p, r1.delta_h], [r2.delta_d, r2.delta_p, r2.delta_h], s[0], s[1])
    e1, e2 = float(HBOND.entropy_volume(r1.molar_volume, s[0])), float(HBOND.entropy_volume(r2.molar_volume, s[1]))
    vr = min(e1, e2)
    n1, n2 = e1 / vr, e2 / vr
    chi = vr * a12 / (8.314462618 * 298.15)
    if chi <= critical_chi(n1, n2):
        return None

    def eqs(p):
        pa, pb = p
        m1 = lambda x: np.log(x) + (1 - n1 / n2) * (1 - x) + n1 * chi * (1 - x) ** 2
        m2 = lambda x: np.log(1 - x) + (1 - n2 / n1) * x + n2 * chi * x ** 2
        return [m1(pa) - m1(pb), m2(pa) - m2(pb)]

    return fsolve(eqs, [0.05, 0.95])


def main() -> None:
    from selector.library import load_library
    from selector.mixing import miscibility, state_matrix

    lib = load_library()
    n = len(lib)
    state_matrix(lib)  # warm-up (RDKit site counts are cached per SMILES)
    t_matrix = _median_time(lambda: state_matrix(lib), 5)

    rng = np.random.default_rng(0)
    sample = rng.choice(n, size=(150, 2))
    names = lib["name"].to_numpy()

    def loop():
        for i, j in sample:
            miscibility(names[i], names[j], library=lib)

    t_loop_sample = _median_time(loop, 3)
    n_pairs = n * (n - 1) // 2
    t_loop_all = t_loop_sample / len(sample) * n_pairs
    print(f"whole-library matrix ({n} x {n} = {n_pairs} pairs): median {t_matrix:.3f} s "
          f"(target <= 2 s)")
    print(f"  per-pair Python loop, scaled from {len(sample)} random pairs: {t_loop_all:.0f} s; "
          f"ratio {t_loop_all / t_matrix:.0f}x")

    miscibility("water", "ethyl acetate")
    t_pair = _median_time(lambda: miscibility("water", "ethyl acetate"), 200)
    t_naive = _median_time(lambda: naive_pair("water", "ethyl acetate"), 30)
    print(f"one pair with binodal (water + ethyl acetate, repeated): median {1e3 * t_pair:.2f} ms "
          f"(target <= 10 ms)")
    print(f"  naive (library copy + look-up + fsolve): {1e3 * t_naive:.2f} ms; ratio {t_naive / t_pair:.1f}x")

    # a pair asked for the first time: the UNIFAC second opinion is not in its cache yet
    from selector.unifac import _second_opinion

    fresh = [(names[i], names[j]) for i, j in rng.choice(n, size=(120, 2)) if i != j][:100]
    for label, kw in (("with the UNIFAC second opinion (default)", {}), ("model only (unifac=False)",
                                                                        {"unifac": False})):
        ts = []
        for a, b in fresh:
            _second_opinion.cache_clear()
            t = time.perf_counter()
            miscibility(a, b, library=lib, **kw)
            ts.append(time.perf_counter() - t)
        print(f"new pair, {label}: median {1e3 * statistics.median(ts):.2f} ms, "
              f"90th percentile {1e3 * float(np.percentile(ts, 90)):.2f} ms over {len(ts)} random pairs "
              f"(target <= 10 ms)")
    # the split as thermo.unifac evaluates it, one composition at a time, on the same pairs
    from thermo.unifac import UNIFAC

    from selector.chem import inchikey
    from selector.unifac import XGRID, covered, groups_of, unifac_split

    groups = []
    for a, b in fresh:
        ra, rb = lib.loc[lib["name"] == a].iloc[0], lib.loc[lib["name"] == b].iloc[0]
        g = [groups_of(inchikey(ra["smiles"]), 1), groups_of(inchikey(rb["smiles"]), 1)]
        if covered(g, 1) is None:
            groups.append(g)
    groups = groups[:20]

    def point_by_point(g):
        m = UNIFAC.from_subgroups(T=298.15, xs=[0.5, 0.5], chemgroups=g, version=1)
        return [m.to_T_xs(298.15, [x, 1.0 - x]).GE() for x in XGRID]

    t_vec = statistics.median([_median_time(lambda: unifac_split(g, version=1), 3) for g in groups])
    t_loop = statistics.median([_median_time(lambda: point_by_point(g), 1) for g in groups])
    print(f"UNIFAC (Dortmund) phase split, {len(groups)} covered pairs: median {1e3 * t_vec:.2f} ms; "
          f"thermo GE point by point (401 compositions) {1e3 * t_loop:.1f} ms; ratio {t_loop / t_vec:.0f}x")


    # the square grid as CSV: the command line's writer, against the same writer keeping attrs
    import argparse
    import contextlib
    import io

    from selector.cli_common import emit
    from selector.mixing import miscibility_matrix

    grid = miscibility_matrix(lib.iloc[:400], library=lib).reset_index()
    args = argparse.Namespace(format="csv", output=None)

    def writer():
        with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
            emit(grid, args, caution=True, header="grid")

    def naive_writer():   # guard_cells and to_csv on the frame as the matrix returned it
        out = grid.copy()
        for c in out.columns:
            if out[c].dtype == object:
                out[c] = out[c].map(lambda v: v)
        out.to_csv(index=False)

    t_w, t_nw = _median_time(writer, 3), _median_time(naive_writer, 3)
    print(f"400 x 400 grid written as CSV ({len(grid.attrs.get('reactive_pairs', []))} reacting pairs in attrs): "
          f"median {t_w:.2f} s; keeping attrs {t_nw:.2f} s; ratio {t_nw / t_w:.0f}x")


if __name__ == "__main__":
    main()
