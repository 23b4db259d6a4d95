"""Benchmark of selector.estimation: cold start, a warm batch of 1,000 SMILES, and the
scaffold-grouped CV accuracy beside the untuned extra-trees baseline, run side by side.

Run: ``python tests/benchmarks/bench_estimation.py`` (about 2 minutes on 2 cores; ``--full``
uses the full-size model for the accuracy table, slower). Numbers are printed, never asserted.

* cold start: a fresh Python process runs ``selector.estimate`` on one new molecule (import,
  training features from the cache, fitting the trees, fingerprints).
* warm batch: 1,000 SMILES (esters, ketones, ethers, carbonates, amides and alcohols built from a
  fixed list of substituents, keeping those that neither the library nor the published training
  table answers, so every row is estimated) in the same process, median of 3 runs; the naive baseline is one ``estimate`` call
  per SMILES (measured on 50 and scaled), which repeats the per-call overhead.
* accuracy: 5-fold CV grouped by Murcko scaffold, seed 0; the model (reduced to 40 trees unless
  ``--full``) and the baseline (extra-trees, 100 trees, RDKit descriptors + Morgan counts,
  untuned) on the same folds.
"""
from __future__ import annotations

import statistics
import subprocess
import sys
import time


def cold_start() -> float:
    code = ("import time; t=time.perf_counter(); import selector; "
            "r=selector.estimate('CC(C)(C)OC(=O)CCC(=O)OC(C)(C)C'); "
            "print(time.perf_counter()-t)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    return float(out.stdout.strip().splitlines()[-1])


#: substituents and templates for a deterministic batch of molecules that are neither library
#: liquids nor compounds of the published training table (so every row is really estimated)
_R = ["C", "CC", "CCC", "CC(C)", "CCCC", "CC(C)C", "C(C)(C)C", "CCCCC", "CCCCCC", "CC(C)CC", "C1CCCCC1",
      "c1ccccc1", "Cc1ccccc1", "CCOCC", "CCOC", "C1CCCC1", "CCCCCCC", "CC(CC)CC", "CCC(C)C", "COCCOC"]
_TEMPLATES = ["{a}OC(=O){b}", "{a}C(=O){b}", "{a}O{b}", "{a}N({b})C(=O)C", "{a}OC(=O)O{b}", "{a}C(O){b}",
              "{a}OC(=O)CC(=O)O{b}", "{a}C(=O)N{b}"]


def novel_batch(lib, n=1000) -> list[str]:
    from selector import estimation as E

    cands = [t.format(a=a, b=b) for t in _TEMPLATES for a in _R for b in _R]
    res = E.estimate(cands, library=lib)          # library / published matches are answered, not estimated
    keep = res.loc[res["source"] == "estimated", "smiles"].drop_duplicates().tolist()
    return (keep * (n // max(len(keep), 1) + 1))[:n]


def main(argv=None) -> int:
    import numpy as np

    from selector import estimation as E
    from selector.train_estimator import (baseline_cv, cross_validate, _metrics)
    from selector.estimation_features import feature_names

    full = "--full" in (argv if argv is not None else sys.argv[1:])
    colds = [cold_start() for _ in range(2)]
    print(f"cold start (new process, one molecule): median {statistics.median(colds):.1f} s "
          f"(runs: {', '.join(f'{c:.1f}' for c in colds)})")

    E.default_bundle(verbose=False)
    df, mols = E._training_cached()
    from selector.library import load_library

    lib = load_library()
    batch = novel_batch(lib)
    times, cpu = [], []
    for _ in range(3):
        t, c = time.perf_counter(), time.process_time()
        r = E.estimate(batch, library=lib)
        times.append(time.perf_counter() - t)
        cpu.append(time.process_time() - c)
    assert (r["source"] == "estimated").all()
    t = time.perf_counter()
    for s in batch[:50]:
        E.estimate(s, library=lib)
    naive = (time.perf_counter() - t) * 1000 / 50
    med = statistics.median(times)
    print(f"warm batch of 1000 SMILES: median {med:.2f} s; naive one-call-per-SMILES "
          f"{naive:.2f} s (scaled from 50); ratio naive/batch {naive / med:.1f}x; runs "
          f"{', '.join(f'{x:.2f}' for x in times)} s wall, CPU median {statistics.median(cpu):.2f} s")

    X = np.nan_to_num(E.training_features(df, mols))
    Y = df[E.HSP_COLS].to_numpy(float)
    groups = E.scaffold_groups(mols, df["smiles"].tolist())
    est = E.HSPEstimator(n_estimators=150 if full else 40, random_state=0, n_jobs=-1)
    t = time.perf_counter()
    P, _, _ = cross_validate(X, Y, groups, est, 5, 0, mols=mols)
    tm = time.perf_counter() - t
    t = time.perf_counter()
    Pb = baseline_cv(X, Y, groups, feature_names(), 100 if full else 40, 0)
    tb = time.perf_counter() - t
    m, b = _metrics(Y, P)[0], _metrics(Y, Pb)[0]
    print(f"\nscaffold-grouped 5-fold CV MAE (MPa^0.5), {len(Y)} compounds:")
    print(f"{'':28s}{'dD':>7s}{'dP':>7s}{'dH':>7s}{'seconds':>9s}")
    print(f"{'this model (' + str(est.n_estimators) + ' trees)':28s}" + "".join(f"{v:7.2f}" for v in m) + f"{tm:9.0f}")
    print(f"{'untuned extra-trees':28s}" + "".join(f"{v:7.2f}" for v in b) + f"{tb:9.0f}")
    print(f"{'reference in the issue':28s}{0.72:7.2f}{1.66:7.2f}{1.53:7.2f}")
    print(f"{'goal':28s}{0.55:7.2f}{1.30:7.2f}{1.20:7.2f}")
    print("ratio baseline/model MAE: " + " ".join(f"{x:.2f}" for x in b / m))
    return 0


if __name__ == "__main__":
    sys.exit(main())
