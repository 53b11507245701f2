#!/usr/bin/python3
"""Times what an analyst would script instead of Lode, in Python, on the benchmark input files.

Usage: alternatives.py INPUT_FOLDER OUTPUT_JSON
Writes {case: {"tool": name, "median_s": seconds, "repeats": n}} for numpy's corrcoef, statsmodels'
Factor (maximum likelihood and principal axis), statsmodels' rotate_factors and scikit-learn's
FactorAnalysis. Each case is timed as the median of several repeats (fewer for slow cases).
"""
import json
import os
import sys
import time
import warnings

import numpy as np

warnings.filterwarnings("ignore")


def read(folder, name):
    with open(os.path.join(folder, name + ".f64"), "rb") as f:
        rows, cols = np.fromfile(f, dtype="<i8", count=2)
        return np.fromfile(f, dtype="<f8", count=rows * cols).reshape(cols, rows).T


def median_time(fn, budget_s=5.0, max_repeats=15):
    times = []
    start = time.perf_counter()
    while len(times) < max_repeats:
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
        if time.perf_counter() - start > budget_s and len(times) >= 3:
            break
        if len(times) == 1 and times[0] > budget_s:
            break
    return float(np.median(times)), len(times)


def main():
    folder, out = sys.argv[1], sys.argv[2]
    only = set(sys.argv[3:])
    results = {}

    def record(case, tool, fn, **kw):
        if only and case not in only:
            return
        median, repeats = median_time(fn, **kw)
        results[case] = {"tool": tool, "median_s": median, "repeats": repeats}
        print(f"  {case:40s} {tool:45s} {median * 1e3:10.2f} ms ({repeats} runs)", flush=True)

    for name in ("corr_n10000_p50", "corr_n100000_p50", "corr_n1000000_p50", "corr_n100000_p10",
                 "corr_n100000_p100", "corr_n100000_p200"):
        x = read(folder, name)
        record(name, "numpy.corrcoef", lambda x=x: np.corrcoef(x, rowvar=False))
        del x

    from statsmodels.multivariate.factor import Factor
    from statsmodels.multivariate.factor_rotation import rotate_factors
    from sklearn.decomposition import FactorAnalysis

    for p, k in ((30, 3), (60, 6), (100, 10), (200, 15)):
        r = read(folder, f"fa_p{p}_k{k}_R")
        x = read(folder, f"fa_p{p}_k{k}_X")
        record(f"ml_p{p}_k{k}", "statsmodels Factor(method='ml')",
               lambda r=r: Factor(corr=r, n_factor=k, method="ml", nobs=2000).fit(maxiter=1000), budget_s=8)
        record(f"paf_p{p}_k{k}", "statsmodels Factor(method='pa')",
               lambda r=r: Factor(corr=r, n_factor=k, method="pa", smc=True).fit(maxiter=1000, tol=1e-8), budget_s=8)
        record(f"sklearn_p{p}_k{k}", "sklearn FactorAnalysis (raw data)",
               lambda x=x: FactorAnalysis(n_components=k, tol=1e-8, max_iter=10000).fit(x), budget_s=8)
        if (p, k) == (100, 10):
            loadings = Factor(corr=r, n_factor=k, method="ml", nobs=2000).fit(maxiter=1000).loadings
            record("oblimin_p100_k10_20starts", "statsmodels rotate_factors oblimin x20",
                   lambda L=loadings: [rotate_factors(L, "oblimin", 0.0, 0) for _ in range(20)], budget_s=20)

    with open(out, "w") as f:
        json.dump(results, f, indent=1)


if __name__ == "__main__":
    main()
