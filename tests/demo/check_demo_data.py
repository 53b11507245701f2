#!/usr/bin/python3
"""Checks the demo survey's data against its generator, its stated model and outside references.

    check_demo_data.py --sheets EXAMPLE_SHEETS_DIR [--rscript Rscript] [--soffice soffice]

Regenerates the data into a temporary folder and checks:
  1. the files are byte-identical to the committed ones (the generator is deterministic);
  2. shape: 420 respondents, an id column and the 30 item columns, answers in 1..5 or empty;
  3. the missing share lies in the range the generator states, and the designed block skips appear;
  4. each item's category shares and the sample correlations agree, loosely, with the population
     values implied by the model after discretisation, computed with scipy.stats (norm.cdf and
     multivariate_normal.cdf, Genz's algorithm for the bivariate normal);
  5. an outside factor analysis recovers the structure: R's base stats::factanal (maximum likelihood)
     with the true number of factors and rotation = "promax" on the complete cases puts each item's
     largest loading on its intended factor, except the designed weak and cross-loading items;
  6. LibreOffice itself (soffice headless) reads the workbook back: the Responses sheet holds the
     same answers, as numbers, and the Items sheet the 30 statements.
Prints one line per check and closes with "N passed, N failed"; exits non-zero on any failure.
"""

import argparse
import csv
import filecmp
import itertools
import json
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np
from scipy import stats

FILES = ["volunteer-survey-responses.csv", "volunteer-survey-items.csv",
         "volunteer-survey-truth.json", "volunteer-survey.ods"]

results = []



def json_close(a, b, tol):
    """True when two parsed JSON values are equal, numbers within tol."""
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(json_close(a[k], b[k], tol) for k in a)
    if isinstance(a, list) and isinstance(b, list):
        return len(a) == len(b) and all(json_close(x, y, tol) for x, y in zip(a, b))
    if isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(a, bool):
        return abs(a - b) <= tol
    return a == b

def check(name, ok, detail=""):
    results.append(bool(ok))
    print(f"{'ok  ' if ok else 'FAIL'} {name}" + (f": {detail}" if detail else ""), flush=True)


def read_responses(path):
    with open(path, newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    header, body = rows[0], rows[1:]
    x = np.array([[float(v) if v != "" else np.nan for v in row[1:]] for row in body])
    return header, [row[0] for row in body], body, x


def population_discretised(truth):
    """Category shares and the Pearson correlation matrix of the five-category items implied by
    the model: latent correlations from the truth file, thresholds cut into 1..5.
    For X = 1 + sum_a 1{Z1 > t_a}, Y = 1 + sum_b 1{Z2 > s_b}:
        Cov(X, Y) = sum_a sum_b [Phi2(t_a, s_b; rho) - Phi(t_a) Phi(s_b)]
    with Phi2 from scipy.stats.multivariate_normal.cdf (reference: scipy, Genz 1992 algorithm)."""
    r = np.array(truth["latent_correlations"])
    t = np.array(truth["thresholds"])
    p = len(t)
    cum = stats.norm.cdf(t)  # P(Z <= t_a)
    shares = np.diff(np.hstack([np.zeros((p, 1)), cum, np.ones((p, 1))]), axis=1)
    cov = np.zeros((p, p))
    for i in range(p):
        cov[i, i] = sum(min(cum[i, a], cum[i, b]) - cum[i, a] * cum[i, b]
                        for a in range(4) for b in range(4))
    for i, j in itertools.combinations(range(p), 2):
        mvn = stats.multivariate_normal(mean=[0.0, 0.0], cov=[[1.0, r[i, j]], [r[i, j], 1.0]])
        points = np.array([[t[i, a], t[j, b]] for a in range(4) for b in range(4)])
        joint = mvn.cdf(points)
        cov[i, j] = cov[j, i] = float(np.sum(joint - np.outer(cum[i], cum[j]).ravel()))
    sd = np.sqrt(np.diag(cov))
    return shares, cov / np.outer(sd, sd)


def pairwise_corr(x):
    p = x.shape[1]
    out = np.eye(p)
    for i, j in itertools.combinations(range(p), 2):
        ok = ~np.isnan(x[:, i]) & ~np.isnan(x[:, j])
        out[i, j] = out[j, i] = np.corrcoef(x[ok, i], x[ok, j])[0, 1]
    return out


def match_columns(estimate, target):
    """Column permutation and signs of `estimate` that maximise the summed Tucker congruence with
    `target` (all permutations: at most 6 factors)."""
    def congruence(a, b):
        return a @ b / np.sqrt((a @ a) * (b @ b))
    m = target.shape[1]
    c = np.array([[congruence(estimate[:, k], target[:, f]) for f in range(m)] for k in range(m)])
    best = max(itertools.permutations(range(m)), key=lambda perm: sum(abs(c[perm[f], f]) for f in range(m)))
    signs = np.array([np.sign(c[best[f], f]) or 1.0 for f in range(m)])
    return list(best), signs, np.array([abs(c[best[f], f]) for f in range(m)])


R_SCRIPT = r"""
# Reference: R's base stats::factanal (maximum-likelihood factor analysis, Lawley and Maxwell)
# with rotation = "promax" (stats::promax, Hendrickson and White 1964, power 4).
args <- commandArgs(trailingOnly = TRUE)
x <- as.matrix(read.csv(args[1], header = FALSE))
k <- as.integer(args[2])
f <- factanal(x, factors = k, rotation = "promax")
write.table(unclass(f$loadings), args[3], row.names = FALSE, col.names = FALSE)
write.table(f$uniquenesses, args[4], row.names = FALSE, col.names = FALSE)
# Factor correlations from the same rotation applied by hand (stats::promax on the unrotated ML
# loadings): Phi = (T'T)^-1 for pattern = A T; its loadings are returned to be matched on their own.
u <- factanal(x, factors = k, rotation = "none")
p <- promax(loadings(u))
write.table(unclass(p$loadings), args[5], row.names = FALSE, col.names = FALSE)
write.table(solve(t(p$rotmat) %*% p$rotmat), args[6], row.names = FALSE, col.names = FALSE)
"""


def run_factanal(rscript, x, k, tmp):
    data = os.path.join(tmp, "complete.csv")
    np.savetxt(data, x, fmt="%d", delimiter=",")
    script = os.path.join(tmp, "factanal.R")
    with open(script, "w") as f:
        f.write(R_SCRIPT)
    outs = [os.path.join(tmp, name) for name in ("load.txt", "uniq.txt", "load2.txt", "phi.txt")]
    subprocess.run([rscript, "--vanilla", script, data, str(k)] + outs, check=True, timeout=300)
    return [np.loadtxt(o, ndmin=2) for o in outs]


def check_workbook(soffice, ods, header, ids, body, codes, tmp):
    """LibreOffice reads the workbook: export every sheet to CSV with all text cells quoted, so
    numeric cells show unquoted (filter options of LibreOffice's CSV export; sheet -1 = all)."""
    out = os.path.join(tmp, "roundtrip")
    profile = "file://" + os.path.join(tmp, "lo-profile")
    cmd = [soffice, f"-env:UserInstallation={profile}", "--headless", "--norestore", "--convert-to",
           "csv:Text - txt - csv (StarCalc):44,34,76,1,,0,true,true,false,false,false,-1",
           "--outdir", out, ods]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
    try:
        proc.wait(timeout=240)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, 9)  # only the soffice this check started
        proc.wait()
        check("LibreOffice converts the workbook within 240 s", False)
        return
    stem = os.path.splitext(os.path.basename(ods))[0]
    resp_path = os.path.join(out, f"{stem}-Responses.csv")
    items_path = os.path.join(out, f"{stem}-Items.csv")
    if not (os.path.exists(resp_path) and os.path.exists(items_path)):
        check("LibreOffice exports the sheets Responses and Items", False, f"found {os.listdir(out) if os.path.isdir(out) else 'nothing'}")
        return
    raw = open(resp_path, encoding="utf-8").read().replace("\r\n", "\n")
    # Item codes, ids and answers contain no commas or quotes, so the expected text is built directly.
    lines = [",".join(f'"{h}"' for h in header)]
    lines += [",".join([f'"{row[0]}"'] + row[1:]) for row in body]
    expected_text = "\n".join(lines) + "\n"
    check("LibreOffice reads the Responses sheet: same answers, as numeric cells, ids and header as text",
          raw == expected_text, f"{len(raw.splitlines())} lines read")
    with open(items_path, newline="", encoding="utf-8") as f:
        items = list(csv.reader(f))
    check("LibreOffice reads the Items sheet: one row per item in questionnaire order",
          [r[0] for r in items[1:]] == codes and all(len(r[2]) > 10 for r in items[1:]))


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--sheets", required=True, help="the example-sheets folder")
    ap.add_argument("--rscript", default="Rscript")
    ap.add_argument("--soffice", default="soffice")
    args = ap.parse_args()
    sheets = os.path.abspath(args.sheets)

    with tempfile.TemporaryDirectory(prefix="lode-demo-") as tmp:
        gen = os.path.join(tmp, "gen")
        subprocess.run([sys.executable, os.path.join(sheets, "generate_volunteer_survey.py"), "--out", gen],
                       check=True, timeout=300)

        # 1. Determinism: the regenerated files equal the committed ones byte for byte.
        for name in FILES:
            same = filecmp.cmp(os.path.join(gen, name), os.path.join(sheets, name), shallow=False)
            if not same and name.endswith(".json"):
                # The truth file holds model-implied values rounded to 4 decimals; the system BLAS
                # (reference or OpenBLAS) can move a value across a rounding boundary. The data
                # themselves must match byte for byte; the derived values must agree to 1e-4.
                with open(os.path.join(gen, name)) as f_gen, open(os.path.join(sheets, name)) as f_ref:
                    same = json_close(json.load(f_gen), json.load(f_ref), 1.01e-4)
                check(f"regenerated {name} equals the committed file (derived values to 1e-4)", same)
            else:
                check(f"regenerated {name} is byte-identical to the committed file", same)

        with open(os.path.join(gen, "volunteer-survey-truth.json")) as f:
            truth = json.load(f)
        codes = truth["items"]
        header, ids, body, x = read_responses(os.path.join(gen, "volunteer-survey-responses.csv"))
        n, p = x.shape

        # 2. Shape.
        check("420 respondents, an id column and 30 items named as in the truth file",
              n == truth["respondents"] == 420 and p == 30 and header == ["respondent"] + codes,
              f"{n} x {p}")
        check("respondent ids are unique", len(set(ids)) == n)
        answered = x[~np.isnan(x)]
        check("every answer is one of 1..5", np.all(np.isin(answered, [1, 2, 3, 4, 5])))

        # 3. Missing responses.
        lo, hi = truth["missing_design"]["expected_missing_share_range"]
        share = float(np.isnan(x).mean())
        check(f"missing share within the stated range [{lo}, {hi}]", lo <= share <= hi, f"{share:.2%}")
        saf = [i for i, c in enumerate(codes) if c.startswith("SAF")]
        val = [i for i, c in enumerate(codes) if c.startswith("VAL")]
        skipped_d = int(np.isnan(x[:, saf]).all(axis=1).sum())
        skipped_e = int(np.isnan(x[:, val]).all(axis=1).sum())
        check("some respondents skip all of section D (routing), 2% to 15%", 0.02 * n <= skipped_d <= 0.15 * n,
              f"{skipped_d}")
        check("some respondents skip all of section E (break-off), 1% to 10%", 0.01 * n <= skipped_e <= 0.10 * n,
              f"{skipped_e}")
        complete = x[~np.isnan(x).any(axis=1)]
        check("at least 200 complete cases remain for listwise deletion", len(complete) >= 200, f"{len(complete)}")
        per_item = np.isnan(x).mean(axis=0)
        check("every item has some missing answers and none more than 15%", np.all((per_item > 0) & (per_item < 0.15)),
              f"{per_item.min():.1%} to {per_item.max():.1%}")

        # 4. Sample versus population after discretisation (scipy.stats as the reference).
        shares, pop_r = population_discretised(truth)
        obs_shares = np.array([[np.mean(x[~np.isnan(x[:, i]), i] == k) for k in range(1, 6)] for i in range(p)])
        dev = np.abs(obs_shares - shares).max()
        # Sampling SE of a share near 0.4 with about 400 answers is about 0.025; 0.09 is over 3.5 SE.
        check("category shares within 0.09 of the population shares", dev < 0.09, f"max deviation {dev:.3f}")
        sample_r = pairwise_corr(x)
        iu = np.triu_indices(p, 1)
        diff = np.abs(sample_r - pop_r)[iu]
        # SE of r is about (1 - r^2)/sqrt(n), about 0.05 here; over 435 pairs the largest deviation
        # stays below 4 SE and the mean near 0.8 SE (tolerances: sanity, not a test of sampling theory).
        check("sample correlations close to the discretised population correlations",
              diff.mean() < 0.06 and diff.max() < 0.2, f"mean |diff| {diff.mean():.3f}, max {diff.max():.3f}")
        rev = [codes.index(c) for c in truth["reverse_keyed"]]
        check("reverse-keyed items correlate negatively with the other items of their scale",
              all(pop_r[i, j] < 0 and sample_r[i, j] < 0
                  for i in rev for j in range(p) if codes[j][:3] == codes[i][:3] and j not in rev))

        # 5. Structure recovery by an outside reference: R stats::factanal, promax, complete cases.
        lam = np.array(truth["population_loadings"])
        m = lam.shape[1]
        load, uniq, load2, phi2 = run_factanal(args.rscript, complete, m, tmp)
        uniq = uniq.ravel()
        perm, signs, cong = match_columns(load, lam)
        est = load[:, perm] * signs
        check("factanal's factors match the true ones (Tucker congruence > 0.85 each)", np.all(cong > 0.85),
              " ".join(f"{c:.2f}" for c in cong))
        intended = [[f["code"] for f in truth["factors"]].index(truth["intended_factor"][c]) for c in codes]
        excepted = set(truth["weak_items"]) | set(truth["cross_loading_items"])
        wrong = [c for i, c in enumerate(codes)
                 if c not in excepted and int(np.argmax(np.abs(est[i]))) != intended[i]]
        check("each item's largest |loading| is on its intended factor (weak and cross-loading items excepted)",
              not wrong, "misplaced: " + ", ".join(wrong) if wrong else f"{p - len(excepted)} items")
        check("reverse-keyed items load negatively on their factor",
              all(est[codes.index(c), intended[codes.index(c)]] < -0.3 for c in truth["reverse_keyed"]))
        weak = [codes.index(c) for c in truth["weak_items"]]
        check("weak items keep a uniqueness above 0.75", np.all(uniq[weak] > 0.75),
              " ".join(f"{codes[i]} {uniq[i]:.2f}" for i in weak))
        fidx = {f["code"]: k for k, f in enumerate(truth["factors"])}
        cross_ok = all(abs(est[codes.index(c), fidx[f]]) >= 0.2
                       for c, fs in truth["cross_loading_items"].items() for f in fs)
        check("cross-loading items load at least 0.2 on both of their factors", cross_ok,
              "; ".join(f"{c} " + " ".join(f"{f} {est[codes.index(c), fidx[f]]:.2f}" for f in fs)
                        for c, fs in truth["cross_loading_items"].items()))
        perm2, signs2, _ = match_columns(load2, lam)
        phi_est = phi2[np.ix_(perm2, perm2)] * np.outer(signs2, signs2)
        phi_true = np.array(truth["factor_correlations"])
        dphi = np.abs(phi_est - phi_true)[np.triu_indices(m, 1)]
        check("factor correlations within 0.2 of the population ones", dphi.max() < 0.2,
              f"max |diff| {dphi.max():.2f}")

        # 6. LibreOffice reads the workbook.
        check_workbook(args.soffice, os.path.join(gen, "volunteer-survey.ods"), header, ids, body, codes, tmp)

    passed, failed = sum(results), len(results) - sum(results)
    print(f"{passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
