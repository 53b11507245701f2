#!/usr/bin/python3
"""Writes the benchmark inputs (seeded, so every run measures the same numbers).

Each input is <name>.f64: int64 rows, int64 cols (little-endian), then the values column-major.
Lode's benchmarks, numpy and R all read these files, so every tool works on identical data.
The data are simulated from factor models; nothing here is a result of Lode.
"""
import os
import sys

import numpy as np


def write(folder, name, m):
    m = np.asarray(m, dtype="<f8")
    path = os.path.join(folder, name + ".f64")
    with open(path, "wb") as f:
        np.array(m.shape, dtype="<i8").tofile(f)
        np.asfortranarray(m).T.ravel().tofile(f)  # column-major order


def factor_data(rng, n, p, k, low=0.5, high=0.8):
    """n rows of p items from k correlated factors, each item loading on one factor."""
    lam = np.zeros((p, k))
    for j in range(p):
        lam[j, j % k] = rng.uniform(low, high)
    phi = np.full((k, k), 0.3) + 0.7 * np.eye(k)
    f = rng.standard_normal((n, k)) @ np.linalg.cholesky(phi).T
    e = rng.standard_normal((n, p)) * np.sqrt(1 - np.sum((lam @ phi) * lam, axis=1))
    return f @ lam.T + e


def main():
    folder = sys.argv[1]
    os.makedirs(folder, exist_ok=True)
    rng = np.random.default_rng(20261201)

    def once(name, make):
        if not os.path.exists(os.path.join(folder, name + ".f64")):
            write(folder, name, make())

    # Correlation: cost growth in n (p = 50) and in p (n = 100,000); one case with 5% missing.
    for n in (10_000, 100_000, 1_000_000):
        once(f"corr_n{n}_p50", lambda n=n: factor_data(rng, n, 50, 5))
    for p in (10, 100, 200):
        once(f"corr_n100000_p{p}", lambda p=p: factor_data(rng, 100_000, p, 5))

    def with_missing():
        x = factor_data(rng, 100_000, 50, 5)
        x[rng.random(x.shape) < 0.05] = np.nan
        return x

    once("corr_n100000_p50_missing", with_missing)

    # Extraction inputs: raw data (n = 2000) and their correlation matrices, for p/k pairs.
    for p, k in ((30, 3), (60, 6), (100, 10), (200, 15)):
        if not os.path.exists(os.path.join(folder, f"fa_p{p}_k{k}_R.f64")):
            x = factor_data(rng, 2000, p, k)
            write(folder, f"fa_p{p}_k{k}_X", x)
            write(folder, f"fa_p{p}_k{k}_R", np.corrcoef(x, rowvar=False))

    # Factor-count input: 60 items, n = 2000.
    once("pa_p60_X", lambda: factor_data(rng, 2000, 60, 4))

    # Ordinal items: 60 five-category items, n = 2000 (thresholds at fixed normal quantiles).
    def ordinal():
        x = factor_data(rng, 2000, 60, 4)
        cuts = np.array([-1.5, -0.5, 0.4, 1.3])
        return 1.0 + np.searchsorted(cuts, x).astype(float)

    once("ordinal_p60_X", ordinal)

    # Bootstrap / dialog-style analysis: n = 500, p = 30, k = 3.
    once("boot_n500_p30_X", lambda: factor_data(rng, 500, 30, 3))


if __name__ == "__main__":
    main()
