# Times what an analyst would script instead of Lode in base R, on the benchmark input files.
#
# Usage: Rscript alternatives.R INPUT_FOLDER OUTPUT_JSON [CASE_REGEX]
# Cases: base R's cor (complete and pairwise), factanal(covmat = R, factors = k, rotation = "none")
# for maximum likelihood, varimax, a plain parallel-analysis loop (normal data, cor, eigen; 1000 replicates),
# r-cran-polycor's hetcor for the polychoric matrix, and the matrix product through the system BLAS.
# Each case is the median wall-clock time of several repeats (fewer for slow cases). With CASE_REGEX
# only the cases whose names it matches (an extended regular expression) run.

args <- commandArgs(trailingOnly = TRUE)
folder <- args[1]
out <- args[2]
only <- if (length(args) > 2) args[3] else ""

wanted <- function(case) !nzchar(only) || grepl(only, case)

read_input <- function(name) {
  con <- file(file.path(folder, paste0(name, ".f64")), "rb")
  on.exit(close(con))
  dims <- readBin(con, "integer", n = 2, size = 8, endian = "little")
  matrix(readBin(con, "double", n = dims[1] * dims[2], size = 8, endian = "little"), dims[1], dims[2])
}

now <- function() as.numeric(Sys.time())  # sub-millisecond wall clock

median_time <- function(fn, budget = 5, max_repeats = 15) {
  times <- numeric(0)
  start <- now()
  while (length(times) < max_repeats) {
    t0 <- now()
    fn()
    times <- c(times, now() - t0)
    if (now() - start > budget && length(times) >= 3) break
    if (length(times) == 1 && times[1] > budget) break
  }
  list(median = median(times), repeats = length(times))
}

results <- list()
record <- function(case, tool, fn, budget = 5, flops = NA, note = "") {
  if (!wanted(case)) return(invisible())
  t <- median_time(fn, budget)
  entry <- list(case = case, tool = tool, median_s = t$median, repeats = t$repeats)
  if (!is.na(flops)) entry$flops_per_s <- flops / t$median
  if (nzchar(note)) entry$note <- note
  results[[length(results) + 1]] <<- entry
  cat(sprintf("  %-32s %-48s %10.2f ms (%d runs)\n", case, tool, 1e3 * t$median, t$repeats))
}

# The system BLAS's matrix-multiply rate.
set.seed(1)
a <- matrix(rnorm(1e6), 1000)
b <- matrix(rnorm(1e6), 1000)
record("matmul_n1000", "R %*% (system BLAS)", function() a %*% b, flops = 2e9)

for (name in c("corr_n10000_p50", "corr_n100000_p50", "corr_n1000000_p50", "corr_n100000_p10",
               "corr_n100000_p100", "corr_n100000_p200")) {
  if (wanted(name)) {
    x <- read_input(name)
    record(name, "R cor", function() cor(x))
    rm(x)
    invisible(gc())
  }
}
for (name in c("corr_n100000_p50_missing", "corr_n1000000_p50_missing")) {
  if (wanted(name)) {
    x <- read_input(name)
    x[is.nan(x)] <- NA
    record(name, "R cor(use = \"pairwise.complete.obs\")", function() cor(x, use = "pairwise.complete.obs"))
    rm(x)
    invisible(gc())
  }
}

for (pk in list(c(30, 3), c(60, 6), c(100, 10), c(200, 15))) {
  p <- pk[1]; k <- pk[2]
  case <- sprintf("ml_p%d_k%d", p, k)
  if (wanted(case)) {
    r <- read_input(sprintf("fa_p%d_k%d_R", p, k))
    record(case, "R factanal(covmat, rotation = \"none\")",
           function() factanal(covmat = r, factors = k, n.obs = 2000, rotation = "none"), budget = 8)
  }
}

# Varimax of the same unrotated loadings Lode rotates (stats::varimax, Kaiser normalisation, its
# default tolerance 1e-5).
if (wanted("varimax_p100_k10")) {
  L <- read_input("rot_p100_k10_L")
  record("varimax_p100_k10", "R stats::varimax", function() varimax(L))
}

# Parallel analysis as an analyst would loop it in base R: 1000 standard normal data sets of
# n = 2000 x p = 60, their correlation matrices' eigenvalues, the 95th percentile per position.
parallel_analysis <- function(n = 2000, p = 60, replicates = 1000) {
  ev <- matrix(0, replicates, p)
  for (i in seq_len(replicates)) {
    ev[i, ] <- eigen(cor(matrix(rnorm(n * p), n, p)), symmetric = TRUE, only.values = TRUE)$values
  }
  apply(ev, 2, quantile, probs = 0.95)
}
set.seed(11)
record("pa_p60_n2000_r1000", "R loop: rnorm, cor, eigen", parallel_analysis, budget = 20)

# Polychoric matrix of five-category items, n = 2000: r-cran-polycor's hetcor (two-step estimates,
# the package default), which estimates the pairs one by one. Only the first 20 of the 60 items
# (190 pairs): all 1770 pairs take minutes, beyond the time budget of ./lode bench.
if (wanted("polychoric_p20_n2000")) {
  suppressPackageStartupMessages(library(polycor))
  x <- read_input("ordinal_p60_X")[, 1:20]
  d <- as.data.frame(lapply(seq_len(ncol(x)), function(j) factor(x[, j], ordered = TRUE)))
  names(d) <- sprintf("i%d", seq_len(ncol(x)))
  record("polychoric_p20_n2000", "polycor::hetcor (two-step)", function() hetcor(d, std.err = FALSE),
         budget = 1)
}

json_value <- function(v) {
  if (is.character(v)) return(paste0("\"", gsub("\"", "\\\\\"", v), "\""))
  if (is.numeric(v) && v == round(v) && abs(v) < 1e15) return(format(v, scientific = FALSE))
  format(v, digits = 17)
}
entries <- vapply(results, function(e) {
  paste0("  {", paste0("\"", names(e), "\": ", vapply(e, json_value, ""), collapse = ", "), "}")
}, "")
versions <- sprintf("{\"R\": \"%s\", \"polycor\": \"%s\"}", paste(R.version$major, R.version$minor, sep = "."),
                    tryCatch(as.character(packageVersion("polycor")), error = function(e) "missing"))
blas <- sprintf("{\"blas\": \"%s\", \"lapack\": \"%s\"}", extSoftVersion()[["BLAS"]], La_library())
writeLines(c("{", sprintf(" \"tool_versions\": %s,", versions), sprintf(" \"blas\": %s,", blas),
             " \"results\": [", paste(entries, collapse = ",\n"), " ]", "}"), out)
