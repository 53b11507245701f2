"""Live references for the Python suite: R's base packages through Rscript. Matrices go in and out
as text at full precision; a missing Rscript is a failure, not a skip (./lode test installs it)."""

import os
import subprocess
import tempfile

import numpy as np

_PRELUDE = r"""
args <- commandArgs(trailingOnly = TRUE)
dir <- args[[1]]
for (f in list.files(dir, pattern = "^in_.*\\.txt$")) {
  name <- sub("^in_(.*)\\.txt$", "\\1", f)
  m <- as.matrix(read.table(file.path(dir, f), na.strings = c("NA", "nan")))
  dimnames(m) <- NULL
  assign(name, m, envir = globalenv())
}
emit <- function(name, x) {
  x <- as.matrix(x)
  write.table(format(x, digits = 17), file.path(dir, paste0("out_", name, ".txt")), row.names = FALSE,
              col.names = FALSE, quote = FALSE)
  invisible(x)
}
"""


def run_r(script, **inputs):
    """Runs `script` with each input as a numeric matrix of that name; returns what emit() wrote."""
    with tempfile.TemporaryDirectory() as d:
        for name, m in inputs.items():
            np.savetxt(os.path.join(d, f"in_{name}.txt"), np.atleast_2d(np.asarray(m, dtype=float)), fmt="%.17g")
        path = os.path.join(d, "script.R")
        with open(path, "w") as f:
            f.write(_PRELUDE + "\n" + script)
        proc = subprocess.run(["Rscript", "--vanilla", path, d], capture_output=True, text=True, timeout=300)
        if proc.returncode != 0:
            raise RuntimeError(f"Rscript failed:\n{proc.stderr}")
        out = {}
        for f in os.listdir(d):
            if f.startswith("out_"):
                out[f[4:-4]] = np.atleast_2d(np.loadtxt(os.path.join(d, f), ndmin=2))
        return out


def survey(n, p, seed, missing=0.0, factors=2, loading=0.7):
    """Simulated Likert-like data: `factors` constructs, items assigned round-robin, 5 points."""
    rng = np.random.default_rng(seed)
    f = rng.standard_normal((n, factors))
    e = rng.standard_normal((n, p))
    x = np.empty((n, p))
    for j in range(p):
        x[:, j] = loading * f[:, j % factors] + np.sqrt(1 - loading**2) * e[:, j]
    x = np.clip(np.round(x * 1.2 + 3.0), 1, 5)
    if missing:
        x[rng.random((n, p)) < missing] = np.nan
    return x
