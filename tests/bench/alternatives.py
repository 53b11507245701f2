#!/usr/bin/python3
"""Times what an analyst would script instead of Lode, in Python, on the benchmark input files.

Usage: alternatives.py INPUT_FOLDER OUTPUT_JSON [CASE_REGEX]
Writes {"tool_versions": {...}, "blas": [...], "results": [{"case", "tool", "median_s", "repeats", ...}]}
for numpy's corrcoef and matrix product, pandas' pairwise DataFrame.corr, statsmodels' Factor (maximum
likelihood and principal axis) and rotate_factors (oblimin from random starts), scikit-learn's
FactorAnalysis and a plain numpy parallel-analysis loop. Each case is the median of several repeats
(fewer for slow cases). With CASE_REGEX only the cases whose names it matches (re.search) run.
"""
import json
import os
import re
import signal
import sys
import time
import warnings

import numpy as np

warnings.filterwarnings("ignore")


def read(folder, name):
    with open(os.path.join(folder, name + ".f64"), "rb") as f:
        rows, cols = (int(v) for v in np.fromfile(f, dtype="<i8", count=2))
        return np.fromfile(f, dtype="<f8", count=rows * cols).reshape(cols, rows).T


# No single run may take longer than this: a slower alternative is stopped and reported as "more
# than CAP seconds", which keeps ./lode bench within its time budget.
CAP_S = float(os.environ.get("LODE_BENCH_ALTERNATIVE_CAP_S", "30"))


class Stopped(Exception):
    pass


def _stop(signum, frame):
    raise Stopped()


def median_time(fn, budget_s=5.0, max_repeats=15):
    """Median wall-clock seconds of fn(): at least 3 runs unless one run exceeds the budget.
    Returns (None, 0) when a run is stopped at CAP_S."""
    times = []
    start = time.perf_counter()
    signal.signal(signal.SIGALRM, _stop)
    while len(times) < max_repeats:
        t0 = time.perf_counter()
        signal.setitimer(signal.ITIMER_REAL, CAP_S)
        try:
            fn()
        except Stopped:
            return None, 0
        finally:
            signal.setitimer(signal.ITIMER_REAL, 0)
        times.append(time.perf_counter() - t0)
        if time.perf_counter() - start > budget_s and len(times) >= 3:
            break
        if len(times) == 1 and times[0] > budget_s:
            break
    return float(np.median(times)), len(times)


def random_orthogonal(rng, k):
    """Haar-distributed orthogonal matrix (QR of a Gaussian matrix, signs of R's diagonal folded in)."""
    q, r = np.linalg.qr(rng.standard_normal((k, k)))
    return q * np.sign(np.diag(r))


# ML + oblimin (quartimin, gamma = 0) from the unrotated start and 20 random orthogonal starts,
# statsmodels' gradient projection with its default stopping rule (projected-gradient norm 1e-5,
# at most 501 iterations; Lode stops at 1e-8), without Kaiser normalisation.
def oblimin_starts(loadings, starts=21, seed=7):
    from statsmodels.multivariate.factor_rotation import rotate_factors

    rng = np.random.default_rng(seed)
    for s in range(starts):
        t = np.eye(loadings.shape[1]) if s == 0 else random_orthogonal(rng, loadings.shape[1])
        rotate_factors(loadings, "oblimin", 0.0, "oblique", T=t)


# Groups: statsmodels ML on the pooled correlations + oblimin, then per group ML extraction and a
# least-squares oblique Procrustes towards the pooled pattern, and Tucker's congruence.
def compare_groups(x, g, k=5):
    from statsmodels.multivariate.factor import Factor
    from statsmodels.multivariate.factor_rotation import rotate_factors

    pooled = Factor(corr=np.corrcoef(x, rowvar=False), n_factor=k, method="ml", nobs=len(x)).fit(maxiter=1000)
    target = rotate_factors(pooled.loadings, "oblimin", 0.0, "oblique")[0]
    out = []
    for code in np.unique(g):
        xs = x[g == code]
        a = Factor(corr=np.corrcoef(xs, rowvar=False), n_factor=k, method="ml", nobs=len(xs)).fit(
            maxiter=1000).loadings
        u = np.linalg.lstsq(a, target, rcond=None)[0]
        u = u * np.sqrt(np.diag(np.linalg.inv(u.T @ u)))
        p = a @ u
        out.append((p * target).sum(0) / np.sqrt((p * p).sum(0) * (target * target).sum(0)))
    return out


# Parallel analysis written plainly: 1000 normal data sets of n x p, their correlation matrices'
# eigenvalues.
def parallel_analysis(n=2000, p=60, replicates=1000, seed=11):
    rng = np.random.default_rng(seed)
    ev = np.empty((replicates, p))
    for i in range(replicates):
        ev[i] = np.linalg.eigvalsh(np.corrcoef(rng.standard_normal((n, p)), rowvar=False))[::-1]
    return np.quantile(ev, 0.95, axis=0)


def main():
    folder, out = sys.argv[1], sys.argv[2]
    only = sys.argv[3] if len(sys.argv) > 3 else ""
    results = []

    def wanted(case):
        return not only or re.search(only, case) is not None

    def record(case, tool, fn, note="", flops=None, **kw):
        if not wanted(case):
            return
        median, repeats = median_time(fn, **kw)
        if median is None:
            results.append({"case": case, "tool": tool, "stopped_after_s": CAP_S})
            print(f"  {case:32s} {tool:48s} stopped after {CAP_S:.0f} s", flush=True)
            return
        entry = {"case": case, "tool": tool, "median_s": median, "repeats": repeats}
        if note:
            entry["note"] = note
        if flops:
            entry["flops_per_s"] = flops / median
        results.append(entry)
        print(f"  {case:32s} {tool:48s} {median * 1e3:10.2f} ms ({repeats} runs)", flush=True)

    # The machine's matrix-multiply rate through numpy (OpenBLAS when it is the system BLAS).
    n = 1000
    a, b = np.random.default_rng(1).standard_normal((2, n, n))
    record("matmul_n1000", "numpy A @ B (system BLAS)", lambda: a @ b, flops=2.0 * n ** 3)

    for name in ("corr_n10000_p50", "corr_n100000_p50", "corr_n1000000_p50", "corr_n100000_p10",
                 "corr_n100000_p100", "corr_n100000_p200"):
        if wanted(name):
            x = read(folder, name)
            record(name, "numpy.corrcoef", lambda x=x: np.corrcoef(x, rowvar=False))
            del x
    for name in ("corr_n100000_p50_missing", "corr_n1000000_p50_missing"):
        if wanted(name):
            import pandas as pd
            df = pd.DataFrame(read(folder, name))
            record(name, "pandas DataFrame.corr (pairwise)", lambda df=df: df.corr())
            del df

    from statsmodels.multivariate.factor import Factor
    from sklearn.decomposition import FactorAnalysis

    for p, k in ((30, 3), (60, 6), (100, 10), (200, 15)):
        r = read(folder, f"fa_p{p}_k{k}_R")
        x = read(folder, f"fa_p{p}_k{k}_X")
        record(f"ml_p{p}_k{k}", "statsmodels Factor(method='ml')",
               lambda r=r, k=k: Factor(corr=r, n_factor=k, method="ml", nobs=2000).fit(maxiter=1000), budget_s=8)
        record(f"paf_p{p}_k{k}", "statsmodels Factor(method='pa')",
               lambda r=r, k=k: Factor(corr=r, n_factor=k, method="pa", smc=True).fit(maxiter=1000, tol=1e-8),
               budget_s=8)
        record(f"ml_p{p}_k{k}", "sklearn FactorAnalysis (from the raw data)",
               lambda x=x, k=k: FactorAnalysis(n_components=k, tol=1e-8, max_iter=10000).fit(x), budget_s=8)

    r = read(folder, "fa_p100_k10_R")
    record("ml_oblimin20_p100_k10", "statsmodels Factor ml + rotate_factors oblimin, 21 starts",
           lambda: oblimin_starts(Factor(corr=r, n_factor=10, method="ml", nobs=2000).fit(maxiter=1000).loadings),
           budget_s=20)
    L = read(folder, "rot_p100_k10_L")
    record("oblimin20_p100_k10", "statsmodels rotate_factors oblimin, 21 starts", lambda: oblimin_starts(L), budget_s=20)

    if wanted("groups_10x1000_p30_k5"):
        gx = read(folder, "groups_10x1000_p30_X")
        gg = read(folder, "groups_10x1000_p30_G")[:, 0]
        record("groups_10x1000_p30_k5", "statsmodels Factor ml per group + numpy oblique Procrustes",
               lambda: compare_groups(gx, gg), budget_s=20)

    record("pa_p60_n2000_r1000", "numpy loop: standard_normal, corrcoef, eigvalsh", parallel_analysis,
           budget_s=20)

    # The restricted ML fit of the generating simple structure (item j on factor j mod 6), p = 60, k = 6:
    # scipy's L-BFGS-B on the ML discrepancy with its analytic gradient, uniquenesses >= 0.005.
    if wanted("restricted_p60_k6"):
        from scipy import optimize
        r = read(folder, "fa_p60_k6_R")
        p, k = r.shape[0], 6
        items = np.arange(p)
        pairs = [(f, g) for f in range(k) for g in range(f + 1, k)]
        logdet_r = np.linalg.slogdet(r)[1]

        def unpack(t):
            lam = np.zeros((p, k))
            lam[items, items % k] = t[:p]
            phi = np.eye(k)
            for i, (f, g) in enumerate(pairs):
                phi[f, g] = phi[g, f] = t[p + i]
            return lam, phi, t[p + len(pairs):]

        def value_and_gradient(t):
            lam, phi, psi = unpack(t)
            s = lam @ phi @ lam.T + np.diag(psi)
            sign, logdet = np.linalg.slogdet(s)
            if sign <= 0:
                return 1e10, np.zeros_like(t)
            w = np.linalg.inv(s)
            m = w - w @ r @ w
            g_lam, g_phi = 2 * m @ lam @ phi, 2 * lam.T @ m @ lam
            grad = np.concatenate([g_lam[items, items % k], [g_phi[f, g] for f, g in pairs], np.diag(m)])
            return logdet - logdet_r + np.sum(w * r) - p, grad

        def restricted():
            t0 = np.concatenate([np.full(p, 0.6), np.full(len(pairs), 0.2), np.full(p, 0.6)])
            bounds = [(None, None)] * (p + len(pairs)) + [(0.005, None)] * p
            return optimize.minimize(value_and_gradient, t0, jac=True, method="L-BFGS-B", bounds=bounds,
                                     options={"maxiter": 10000, "gtol": 1e-10, "ftol": 1e-15})

        record("restricted_p60_k6", "scipy L-BFGS-B on the ML discrepancy", restricted, budget_s=8)

    import pandas
    import sklearn
    import statsmodels
    try:
        from threadpoolctl import threadpool_info
        blas = [{k: v for k, v in lib.items() if k in ("internal_api", "version", "num_threads", "filepath")}
                for lib in threadpool_info()]
    except Exception:  # threadpoolctl missing or failing: the machine description says so
        blas = []
    doc = {"tool_versions": {"numpy": np.__version__, "pandas": pandas.__version__,
                             "statsmodels": statsmodels.__version__, "scikit-learn": sklearn.__version__,
                             "python": sys.version.split()[0]},
           "blas": blas, "results": results}
    with open(out, "w") as f:
        json.dump(doc, f, indent=1)


if __name__ == "__main__":
    main()
