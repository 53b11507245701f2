#!/usr/bin/python3
"""Writes the benchmark inputs (seeded, so every run measures the same numbers).

Each input is <name>.f64: int64 rows, int64 cols (little-endian), then the values column-major.
Lode's benchmarks, numpy and R all read these files, so every tool works on identical data.
The data are simulated from factor models; nothing here is a result of Lode.
"""
import hashlib
import os
import sys
import zlib

import numpy as np


def write(folder, name, m):
    m = np.asarray(m, dtype="<f8")
    path = os.path.join(folder, name + ".f64")
    with open(path, "wb") as f:
        np.array(m.shape, dtype="<i8").tofile(f)
        np.asfortranarray(m).T.ravel().tofile(f)  # column-major order


def read(folder, name):
    with open(os.path.join(folder, name + ".f64"), "rb") as f:
        rows, cols = (int(v) for v in np.fromfile(f, dtype="<i8", count=2))
        return np.fromfile(f, dtype="<f8", count=rows * cols).reshape(cols, rows).T


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
    # The inputs are cached; a change to this script invalidates them all.
    with open(__file__, "rb") as f:
        stamp = hashlib.sha256(f.read()).hexdigest()
    stamp_path = os.path.join(folder, "inputs.stamp")
    if not os.path.exists(stamp_path) or open(stamp_path).read().strip() != stamp:
        for old in os.listdir(folder):
            if old.endswith(".f64"):
                os.remove(os.path.join(folder, old))

    def stream(name):
        """Each input draws from its own seeded stream, so cached inputs never shift the others."""
        return np.random.default_rng([20261201, zlib.crc32(name.encode())])

    def once(name, make):
        if not os.path.exists(os.path.join(folder, name + ".f64")):
            print(f"  writing {name}", flush=True)
            write(folder, name, make(stream(name)))

    # Correlation: cost growth in n (p = 50) and in p (n = 100,000); 5% missing at n = 100,000 and
    # 1,000,000 (p = 50), beside the complete data of the same shape.
    for n in (10_000, 100_000, 1_000_000):
        once(f"corr_n{n}_p50", lambda rng, n=n: factor_data(rng, n, 50, 5))
    for p in (10, 100, 200):
        once(f"corr_n100000_p{p}", lambda rng, p=p: factor_data(rng, 100_000, p, 5))

    def with_missing(rng, n):
        x = factor_data(rng, n, 50, 5)
        x[rng.random(x.shape) < 0.05] = np.nan
        return x

    once("corr_n100000_p50_missing", lambda rng: with_missing(rng, 100_000))
    once("corr_n1000000_p50_missing", lambda rng: with_missing(rng, 1_000_000))

    # The em rule: n = 100,000, p = 50, 10% of the cells missing (each cell with probability 0.1).
    def em_input(rng):
        x = factor_data(rng, 100_000, 50, 5)
        x[rng.random(x.shape) < 0.10] = np.nan
        return x

    once("em_n100000_p50_missing10", em_input)

    # Groups: 10 groups of 1,000 respondents, p = 30, k = 5 (one model); the codes 0..9 in blocks.
    once("groups_10x1000_p30_X", lambda rng: factor_data(rng, 10_000, 30, 5))
    once("groups_10x1000_p30_G", lambda rng: np.repeat(np.arange(10.0), 1000).reshape(-1, 1))

    # Extraction inputs: raw data (n = 2000) and their correlation matrices, for p/k pairs.
    for p, k in ((30, 3), (60, 6), (100, 10), (200, 15)):
        once(f"fa_p{p}_k{k}_X", lambda rng, p=p, k=k: factor_data(rng, 2000, p, k))
        once(f"fa_p{p}_k{k}_R", lambda rng, p=p, k=k: np.corrcoef(read(folder, f"fa_p{p}_k{k}_X"), rowvar=False))

    # Factor-count input: 60 items, n = 2000.
    once("pa_p60_X", lambda rng: factor_data(rng, 2000, 60, 4))

    # Ordinal items: 60 five-category items, n = 2000 (thresholds at fixed normal quantiles).
    def ordinal(rng):
        x = factor_data(rng, 2000, 60, 4)
        cuts = np.array([-1.5, -0.5, 0.4, 1.3])
        return 1.0 + np.searchsorted(cuts, x).astype(float)

    once("ordinal_p60_X", ordinal)

    # Bootstrap / dialog-style analysis: n = 500, p = 30, k = 3.
    once("boot_n500_p30_X", lambda rng: factor_data(rng, 500, 30, 3))
    # Survey-sized bootstrap inputs (k = 5): complete, and with 5% of the answers blank.
    once("boot_n3000_p30_X", lambda rng: factor_data(rng, 3000, 30, 5))

    def blanks(rng, n, p):
        x = factor_data(rng, n, p, 5)
        x[rng.random(x.shape) < 0.05] = np.nan
        return x

    once("boot_n3000_p30_missing_X", lambda rng: blanks(rng, 3000, 30))
    once("boot_n10000_p60_missing_X", lambda rng: blanks(rng, 10_000, 60))

    # Split-sample replication: n = 2000, p = 30, k = 5.
    once("rep_n2000_p30_k5_X", lambda rng: factor_data(rng, 2000, 30, 5))

    # Rotation input: unrotated loadings of 100 items on 10 factors (principal components of the
    # p = 100 correlation matrix scaled by the root eigenvalues), derived without random draws.
    def unrotated(rng):
        r = read(folder, "fa_p100_k10_R")
        values, vectors = np.linalg.eigh(r)
        order = np.argsort(values)[::-1][:10]
        return vectors[:, order] * np.sqrt(values[order])

    once("rot_p100_k10_L", unrotated)

    with open(stamp_path, "w") as f:
        f.write(stamp + "\n")


if __name__ == "__main__":
    main()
