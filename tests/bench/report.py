#!/usr/bin/python3
"""Merges the benchmark results into tests/bench/RESULTS.md.

  report.py machine OUT.json          describe this machine (CPU, cores, memory, BLAS, compiler, load)
  report.py write --results DIR --out RESULTS.md
                                      merge DIR/{lode,python,r,memory,machine,machine-end}.json

Lode's numbers come from Google Benchmark's JSON (the median aggregate of the repetitions, wall-clock
time, and the process CPU time of all threads); the alternatives' from alternatives.py / alternatives.R. Every Lode benchmark is named
BM_<Family>/<case>, and an alternative timed on the same input carries the same <case>, which is how
rows are matched. A case without a Lode number is listed as not measured yet, never estimated.
"""
import argparse
import datetime
import json
import math
import os
import platform
import re
import subprocess
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import engines_report  # noqa: E402

# The side-by-side tables: (section title, [(case, what is measured)]).
SECTIONS = [
    ("Correlation matrix (Pearson, raw data)", [
        ("corr_n10000_p50", "n = 10,000, p = 50"),
        ("corr_n100000_p50", "n = 100,000, p = 50"),
        ("corr_n1000000_p50", "n = 1,000,000, p = 50"),
        ("corr_n100000_p10", "n = 100,000, p = 10"),
        ("corr_n100000_p100", "n = 100,000, p = 100"),
        ("corr_n100000_p200", "n = 100,000, p = 200"),
        ("corr_n100000_p50_missing", "n = 100,000, p = 50, 5% missing, pairwise"),
        ("corr_n1000000_p50_missing", "n = 1,000,000, p = 50, 5% missing, pairwise"),
        ("corr_checks_n1000000_p50", "the separate input checks (validate_data; complete data now check in the summing pass), n = 1,000,000, p = 50"),
        ("em_n100000_p50_missing10", "n = 100,000, p = 50, 10% missing, the em rule (EM to 1e-10)"),
    ]),
    ("Groups (ML + oblimin pooled, oblique Procrustes per group)", [
        ("groups_10x1000_p30_k5", "10 groups of n = 1,000, p = 30, k = 5"),
    ]),
    ("Extraction from a correlation matrix (n = 2000)", [
        (f"{m}_p{p}_k{k}", f"{label}, p = {p}, k = {k}")
        for m, label in (("ml", "maximum likelihood"), ("paf", "principal axis"), ("minres", "minimum residual"))
        for p, k in ((30, 3), (60, 6), (100, 10), (200, 15))
    ]),
    ("Rotation with random starts", [
        ("oblimin20_p100_k10", "oblimin (quartimin), p = 100, k = 10, unrotated + 20 random starts"),
        ("geomin20_p100_k10", "geomin, p = 100, k = 10, unrotated + 20 random starts"),
        ("varimax_p100_k10", "varimax, p = 100, k = 10, 1 start"),
        ("ml_oblimin20_p100_k10", "ML extraction + oblimin, unrotated + 20 random starts, p = 100, k = 10"),
    ]),
    ("Parallel analysis (normal-theory replicates)", [
        ("pa_p60_n2000_r1000", "p = 60, n = 2000, 1000 replicates"),
        ("pa_p20_n2000_r1000", "p = 20, n = 2000, 1000 replicates"),
        ("pa_p60_n500_r1000", "p = 60, n = 500, 1000 replicates"),
    ]),
    ("Polychoric correlation matrix (5 categories, n = 2000)", [
        ("polychoric_p20_n2000", "20 items"),
        ("polychoric_p60_n2000", "60 items"),
    ]),
    ("Bootstrap (ML + oblimin)", [
        ("bootstrap_n500_p30_k3_r1000", "n = 500, p = 30, k = 3: 1000 replicates"),
        ("bootstrap_n500_p30_k3_r100", "n = 500, p = 30, k = 3: 100 replicates"),
        ("bootstrap_n500_p30_k3_r100_scratch", "n = 500, p = 30, k = 3: 100 replicates, each fitted from scratch with 10 random rotation starts"),
        ("bootstrap_n3000_p30_k5_r1000", "n = 3,000, p = 30, k = 5: 1000 replicates"),
        ("bootstrap_n3000_p30_k5_r100_missing", "n = 3,000, p = 30, k = 5, 5% blanks: 100 replicates"),
        ("bootstrap_n10000_p60_k5_r200_missing", "n = 10,000, p = 60, k = 5, 5% blanks: 200 replicates"),
    ]),
    ("Does the structure hold up? (ML + oblimin replication; restricted ML fit, n = 2000)", [
        ("replication_n2000_p30_k5_s100", "100 random splits into halves, p = 30, k = 5"),
        ("restricted_p60_k6", "restricted (confirmatory) ML fit of the simple structure, p = 60, k = 6"),
    ]),
    ("Summaries (5 categories, 30 items)", [
        ("add_p30_n2000", "summary of 2000 rows"),
        ("merge_1000_p30", "1000 summaries merged into one"),
        ("bytes_round_trip_p30", "byte form written and read back"),
    ]),
    ("Whole dialog-style analysis (correlation, factor count, ML, oblimin, fit)", [
        ("analysis_n2000_p60", "n = 2000, p = 60"),
        ("analysis_n500_p30", "n = 500, p = 30"),
    ]),
]

# Cost growth: (path, variable, [(value, case)]).
GROWTH = [
    ("Correlation, p = 50", "n", [(10_000, "corr_n10000_p50"), (100_000, "corr_n100000_p50"),
                                  (1_000_000, "corr_n1000000_p50")]),
    ("Correlation, n = 100,000", "p", [(10, "corr_n100000_p10"), (50, "corr_n100000_p50"),
                                       (100, "corr_n100000_p100"), (200, "corr_n100000_p200")]),
] + [
    (f"{label} (k grows with p)", "p", [(p, f"{m}_p{p}_k{k}") for p, k in ((30, 3), (60, 6), (100, 10), (200, 15))])
    for m, label in (("ml", "Maximum likelihood"), ("paf", "Principal axis"), ("minres", "Minimum residual"))
] + [
    ("Parallel analysis, n = 2000, 1000 replicates", "p", [(20, "pa_p20_n2000_r1000"), (60, "pa_p60_n2000_r1000")]),
    ("Parallel analysis, p = 60, 1000 replicates", "n", [(500, "pa_p60_n500_r1000"), (2000, "pa_p60_n2000_r1000")]),
    ("Polychoric matrix, n = 2000", "p", [(20, "polychoric_p20_n2000"), (60, "polychoric_p60_n2000")]),
    ("Bootstrap, n = 500, p = 30, k = 3", "replicates", [(100, "bootstrap_n500_p30_k3_r100"),
                                                         (1000, "bootstrap_n500_p30_k3_r1000")]),
    ("Whole analysis", "n x p", [(500 * 30, "analysis_n500_p30"), (2000 * 60, "analysis_n2000_p60")]),
]

# The speed targets (issues 11 and 23): (target, kind, case, threshold, alternative tool prefix).
#   kind "under": Lode's median must be below threshold seconds.
#   kind "faster": alternative / Lode must be at least threshold.
#   kind "memory": peak resident memory / data size must be below threshold.
TARGETS = [
    ("Parallel analysis, 1000 replicates, p = 60: under 0.1 s", "under", "pa_p60_n2000_r1000", 0.1, None),
    ("Parallel analysis: at least 100x faster than the R loop (n = 2000)", "faster", "pa_p60_n2000_r1000", 100.0,
     "R loop"),
    ("ML extraction, p = 100, k = 10: at least 3x faster than R's factanal", "faster", "ml_p100_k10", 3.0,
     "R factanal"),
    ("ML + oblimin with 20 random starts (p = 100, k = 10): under 0.1 s", "under", "ml_oblimin20_p100_k10", 0.1, None),
    ("Correlation of 1,000,000 x 50: no slower than numpy's corrcoef", "faster", "corr_n1000000_p50", 1.0,
     "numpy.corrcoef"),
    ("Polychoric matrix, 60 items, n = 2000: under 0.5 s", "under", "polychoric_p60_n2000", 0.5, None),
    ("Bootstrap, 1000 replicates (ML + oblimin, n = 500, p = 30, k = 3): under 5 s", "under",
     "bootstrap_n500_p30_k3_r1000", 5.0, None),
    ("Pairwise Pearson, 5% blanks, n = 100,000, p = 50: at least 2x faster than pandas' pairwise corr", "faster",
     "corr_n100000_p50_missing", 2.0, "pandas DataFrame.corr"),
    ("Pairwise Pearson, 5% blanks, n = 1,000,000, p = 50: at least 2x faster than pandas' pairwise corr",
     "faster", "corr_n1000000_p50_missing", 2.0, "pandas DataFrame.corr"),
    ("Bootstrap, 1000 replicates (ML + oblimin, n = 3,000, p = 30, k = 5): under 2 s", "under",
     "bootstrap_n3000_p30_k5_r1000", 2.0, None),
    ("Bootstrap, 200 replicates (ML + oblimin, n = 10,000, p = 60, k = 5, 5% blanks): under 3 s", "under",
     "bootstrap_n10000_p60_k5_r200_missing", 3.0, None),
    ("Peak memory of the 1,000,000 x 50 analysis: under twice the data", "memory", None, 2.0, None),
    ("Merging 1,000 summaries of 30 items: under 50 ms", "under", "merge_1000_p30", 0.05, None),
    ("Replication, 100 splits (ML + oblimin, n = 2000, p = 30, k = 5): under 2 s", "under",
     "replication_n2000_p30_k5_s100", 2.0, None),
    ("Restricted ML fit, p = 60, k = 6: under 50 ms", "under", "restricted_p60_k6", 0.05, None),
]


# What the side-by-side rows compare, beyond the case names.
NOTES = [
    "Lode runs with its default options (tolerances, iteration caps, Kaiser normalisation in rotation) "
    "and on all cores; where a method iterates, the table says when it did not converge.",
    "Correlation: Lode's `correlation` includes its input checks (items, infinite values, constant "
    "items) and the missing-value bookkeeping; numpy's `corrcoef` and R's `cor` do neither. With blanks "
    "(pairwise deletion) compare each `_missing` row with the complete row of the same shape: the issue's "
    "target is at most 1.5x.",
    "Extraction: R's `factanal` with its default control, from the correlation matrix; statsmodels' "
    "`Factor` (method 'ml', 'pa' with SMC starts) from the same matrix; scikit-learn's `FactorAnalysis` "
    "fits the raw data (n = 2000), a different but common route to ML loadings. statsmodels has no "
    "minimum residual method.",
    "Rotation: statsmodels' `rotate_factors` with its default stopping rule (projected gradient below "
    "1e-5, at most 501 iterations; Lode stops at 1e-8, up to 10,000) and without Kaiser normalisation, "
    "21 starts (unrotated + 20 random orthogonal, as Lode). R's `varimax` with its defaults (1e-5).",
    "Parallel analysis: the R and numpy loops simulate n x p normal data for each replicate; Lode draws "
    "each replicate's correlation matrix directly (Wishart, Bartlett decomposition), the same "
    "distribution at a cost that does not depend on n. All take the 95th percentile of 1000 replicates.",
    "Polychoric: r-cran-polycor's `hetcor` (two-step, as Lode) on the first 20 items only; all 60 items "
    "take it minutes, beyond this run's time budget.",
    "Bootstrap and the whole analysis have no single general-purpose alternative (base R has no "
    "oblimin); their targets are absolute. The bootstrap runs Lode's pipeline with its defaults: each "
    "replicate's ML search starts from the full-sample uniquenesses and its oblimin rotation from the "
    "full-sample rotation carried over to the replicate (one start); the \"from scratch\" row fits every "
    "replicate as a single analysis would (Joreskog's start, the unrotated loadings plus 10 random starts).",
    "Replication has no general-purpose alternative; its target is absolute. The restricted fit is set "
    "beside scipy's L-BFGS-B minimising the same ML discrepancy with its analytic gradient (written in "
    "alternatives.py), from the same kind of start.",
]


# ---------------------------------------------------------------------------------------------------
# Reading the results

def load(path):
    if not os.path.exists(path):
        return None
    with open(path) as f:
        return json.load(f)


# Google Benchmark's own fields; every other number in an entry is a counter set by the benchmark.
GB_FIELDS = {"name", "family_index", "per_family_instance_index", "run_name", "run_type", "repetitions",
             "repetition_index", "threads", "iterations", "real_time", "cpu_time", "time_unit",
             "aggregate_name", "aggregate_unit", "error_occurred", "error_message"}


def lode_medians(doc):
    """{case: {"s": median seconds, "cpu_s": median CPU seconds, "repetitions": n, "counters": {...}}} from
    Google Benchmark JSON. Uses the median aggregate where the benchmark was repeated, else the mean of its
    runs. The CPU time is the process's (all threads) where the benchmark measures it so."""
    if not doc:
        return {}
    unit = {"ns": 1e-9, "us": 1e-6, "ms": 1e-3, "s": 1.0}
    runs, medians = {}, {}
    for b in doc.get("benchmarks", []):
        if b.get("error_occurred"):
            continue
        name = b.get("run_name", b["name"])
        parts = name.split("/")
        if len(parts) < 2:
            continue
        case = parts[1]
        seconds = b["real_time"] * unit[b.get("time_unit", "ns")]
        cpu = b["cpu_time"] * unit[b.get("time_unit", "ns")] if "cpu_time" in b else None
        counters = {k: v for k, v in b.items() if k not in GB_FIELDS and isinstance(v, (int, float))}
        if b.get("run_type") == "aggregate":
            if b.get("aggregate_name") == "median":
                medians[case] = {"s": seconds, "cpu_s": cpu, "repetitions": b.get("repetitions", 0),
                                 "counters": counters}
        else:
            runs.setdefault(case, []).append((seconds, cpu, counters))
    for case, rs in runs.items():
        if case not in medians:
            cpus = [c for _, c, _ in rs if c is not None]
            medians[case] = {"s": sum(s for s, _, _ in rs) / len(rs),
                             "cpu_s": sum(cpus) / len(cpus) if cpus else None,
                             "repetitions": len(rs), "counters": rs[-1][2]}
    return medians


def lode_errors(doc):
    """{case: message} for benchmarks that reported an error (e.g. an input they could not read)."""
    out = {}
    for b in (doc or {}).get("benchmarks", []):
        if b.get("error_occurred"):
            parts = b.get("run_name", b["name"]).split("/")
            if len(parts) >= 2:
                out[parts[1]] = b.get("error_message", "error")
    return out


def alternatives(*docs):
    """{case: [entry, ...]} from the alternatives' JSON files."""
    out = {}
    for doc in docs:
        for entry in (doc or {}).get("results", []):
            out.setdefault(entry["case"], []).append(entry)
    return out


# ---------------------------------------------------------------------------------------------------
# Formatting

def fmt_time(s):
    if s is None:
        return "—"
    if s >= 100:
        return f"{s:.0f} s"
    if s >= 1:
        return f"{s:.2f} s"
    if s >= 1e-3:
        return f"{s * 1e3:.3g} ms"
    return f"{s * 1e6:.3g} µs"


def fmt_ratio(x):
    if x >= 100:
        return f"{x:.0f}x"
    if x >= 10:
        return f"{x:.1f}x"
    return f"{x:.2f}x"


def alt_time(entry):
    if "stopped_after_s" in entry:
        return f"> {entry['stopped_after_s']:.0f} s (stopped)"
    return fmt_time(entry["median_s"])


def alt_ratio(entry, lode_s):
    """How many times faster Lode is than the alternative (> 1: Lode faster)."""
    if lode_s is None or lode_s <= 0:
        return "—"
    if "stopped_after_s" in entry:
        return "> " + fmt_ratio(entry["stopped_after_s"] / lode_s)
    return fmt_ratio(entry["median_s"] / lode_s)


def fmt_bytes(b):
    return f"{b / 2**20:,.0f} MiB"


# ---------------------------------------------------------------------------------------------------
# Targets

def evaluate_target(target, lode, alts, memory):
    """(measured text, verdict text) for one target; verdict is 'met', 'not met' or 'not measured yet'."""
    title, kind, case, threshold, tool = target
    if kind == "memory":
        if not memory:
            return "—", "not measured yet"
        ratio = memory["peak_rss_bytes"] / memory["data_bytes"]
        measured = f"{fmt_bytes(memory['peak_rss_bytes'])} peak for {fmt_bytes(memory['data_bytes'])} of data ({ratio:.2f}x)"
        margin = threshold / ratio
        if ratio < threshold:
            return measured, f"**met** ({ratio:.2f}x against a limit of {threshold:g}x)"
        return measured, f"**not met**: {ratio:.2f}x against a limit of {threshold:g}x ({1 / margin:.2f} times the limit)"
    if case not in lode:
        return "—", "not measured yet (the Lode benchmark is not there yet)"
    s = lode[case]["s"]
    cpu = lode[case].get("cpu_s")
    if kind == "under":
        measured = fmt_time(s) + (f" (CPU {fmt_time(cpu)})" if cpu is not None else "")
        if s < threshold:
            return measured, f"**met**, {100 * (1 - s / threshold):.0f}% under the limit of {fmt_time(threshold)}"
        return measured, f"**not met**: {fmt_ratio(s / threshold)} the limit of {fmt_time(threshold)}"
    # kind == "faster"
    matches = [e for e in alts.get(case, []) if e["tool"].startswith(tool)]
    if not matches:
        return fmt_time(s), f"not measured yet (no {tool} time)"
    e = matches[0]
    if "stopped_after_s" in e:
        bound = e["stopped_after_s"] / s
        measured = f"Lode {fmt_time(s)}, {e['tool']} > {e['stopped_after_s']:.0f} s: > {fmt_ratio(bound)}"
        if bound >= threshold:
            return measured, f"**met** (at least {fmt_ratio(bound)} against {fmt_ratio(threshold)} required)"
        return measured, "undecided: the alternative was stopped before the ratio could be known"
    ratio = e["median_s"] / s
    measured = f"Lode {fmt_time(s)}, {e['tool']} {fmt_time(e['median_s'])}: {fmt_ratio(ratio)}"
    if ratio >= threshold:
        return measured, f"**met** ({fmt_ratio(ratio)} against {fmt_ratio(threshold)} required)"
    if threshold == 1.0:
        return measured, f"**not met**: Lode takes {fmt_ratio(1 / ratio)} as long"
    return measured, f"**not met**: {fmt_ratio(ratio)} against {fmt_ratio(threshold)} required ({fmt_ratio(threshold / ratio)} short)"


# ---------------------------------------------------------------------------------------------------
# Machine description

def run(cmd):
    try:
        return subprocess.run(cmd, capture_output=True, text=True, timeout=60).stdout.strip()
    except (OSError, subprocess.SubprocessError):
        return ""


def describe_machine(build_dir):
    cpu = ""
    try:
        with open("/proc/cpuinfo") as f:
            for line in f:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    mem = 0
    try:
        with open("/proc/meminfo") as f:
            for line in f:
                if line.startswith("MemTotal:"):
                    mem = int(line.split()[1]) * 1024
    except OSError:
        pass
    cache = {}
    cache_path = os.path.join(build_dir, "CMakeCache.txt")
    if os.path.exists(cache_path):
        with open(cache_path) as f:
            for line in f:
                m = re.match(r"^([A-Za-z_]+):[A-Z]+=(.*)$", line.strip())
                if m:
                    cache[m.group(1)] = m.group(2)
    compiler = cache.get("CMAKE_CXX_COMPILER", "c++")
    blas = run(["update-alternatives", "--query", "libblas.so.3-x86_64-linux-gnu"])
    lapack = run(["update-alternatives", "--query", "liblapack.so.3-x86_64-linux-gnu"])
    value = lambda text: next((l.split(":", 1)[1].strip() for l in text.splitlines() if l.startswith("Value:")), "")
    os_name = ""
    if os.path.exists("/etc/os-release"):
        with open("/etc/os-release") as f:
            os_name = next((l.split("=", 1)[1].strip().strip('"') for l in f if l.startswith("PRETTY_NAME=")), "")
    return {
        "date": datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M UTC"),
        "cpu": cpu or platform.processor(),
        "cores": os.cpu_count(),
        "memory_bytes": mem,
        "os": os_name,
        "kernel": platform.release(),
        "compiler": run([compiler, "--version"]).splitlines()[0] if run([compiler, "--version"]) else compiler,
        "build_type": cache.get("CMAKE_BUILD_TYPE", ""),
        "cxx_flags": (cache.get("CMAKE_CXX_FLAGS", "") + " " +
                      cache.get("CMAKE_CXX_FLAGS_" + cache.get("CMAKE_BUILD_TYPE", "").upper(), "")).strip(),
        "system_blas": value(blas),
        "system_lapack": value(lapack),
        "load_average": list(os.getloadavg()),
    }


# ---------------------------------------------------------------------------------------------------
# The report

def lode_cases(results_dir):
    """The cases lode_bench has (its --benchmark_list_tests output), or None when not recorded."""
    path = os.path.join(results_dir, "lode-cases.txt")
    if not os.path.exists(path):
        return None
    with open(path) as f:
        return {l.strip().split("/")[1] for l in f if l.count("/") >= 1}


def machine_section(w, machine, machine_end, context, py, r, elapsed_s, filter_regex):
    """The machine the run used, and a warning when it was shared."""
    w("## Machine")
    w("")
    w("| | |")
    w("| --- | --- |")
    w(f"| date | {machine.get('date', '—')} |")
    w(f"| CPU | {machine.get('cpu', '—')}, {machine.get('cores', '—')} cores |")
    if machine.get("memory_bytes"):
        w(f"| memory | {machine['memory_bytes'] / 2**30:.1f} GiB |")
    w(f"| system | {machine.get('os', '—')}, Linux {machine.get('kernel', '—')} |")
    w(f"| compiler | {machine.get('compiler', '—')}, {machine.get('build_type', '')} "
      f"(`{machine.get('cxx_flags', '')}`) |")
    if context.get("eigen_simd"):
        w(f"| Lode's vector instructions (Eigen) | {context['eigen_simd']} |")
    if context.get("lode_threads"):
        w(f"| Lode's threads | {context['lode_threads']} |")
    w(f"| system BLAS / LAPACK (numpy, R) | {machine.get('system_blas', '—')} / {machine.get('system_lapack', '—')} |")
    for doc, name in ((py, "Python"), (r, "R")):
        if doc and doc.get("tool_versions"):
            versions = ", ".join(f"{k} {v}" for k, v in doc["tool_versions"].items())
            w(f"| {name} tools | {versions} |")
    if py and py.get("blas"):
        libs = "; ".join(f"{b.get('internal_api', '?')} {b.get('version') or ''} ({b.get('num_threads', '?')} threads)"
                         for b in py["blas"])
        w(f"| numpy's BLAS at run time | {libs} |")
    if r and r.get("blas"):
        w(f"| R's BLAS at run time | {r['blas'].get('blas', '—')} |")
    load_start = machine.get("load_average")
    load_end = machine_end.get("load_average")
    if load_start:
        w(f"| load average (1, 5, 15 min) at start | {', '.join(f'{x:.2f}' for x in load_start)} |")
    if load_end:
        w(f"| load average at end | {', '.join(f'{x:.2f}' for x in load_end)} |")
    if elapsed_s:
        w(f"| whole run | {elapsed_s / 60:.1f} min |")
    if filter_regex:
        w(f"| cases | only those matching `{filter_regex}` |")
    w("")
    cores = machine.get("cores") or 0
    if load_start and cores and max(load_start[0], (load_end or [0])[0]) > 0.5 * cores:
        w(f"**The machine was shared during this run** (load average {load_start[0]:.1f} at the start"
          + (f", {load_end[0]:.1f} at the end" if load_end else "")
          + f", on {cores} cores): every wall-clock time here, Lode's and the alternatives' alike, is "
          "inflated and noisier than on an idle machine, because the processes wait for a core. Lode's "
          "CPU time is not inflated that way: it is the work done, and on an idle machine whose cores "
          "Lode has to itself the wall-clock time of work spread evenly over the cores approaches the CPU "
          f"time divided by {cores}. The ratios are more trustworthy than the absolute times, and absolute "
          "targets are judged on these loaded wall-clock times as they are.")
        w("")


def side_by_side_section(w, md, lode, alts):
    """Lode and the alternatives case by case; returns the (section, label, case) without a Lode number."""
    w("## Side by side")
    w("")
    missing = []
    for title, cases in SECTIONS:
        rows = []
        for case, label in cases:
            l = lode.get(case)
            a = alts.get(case, [])
            if not l and not a:
                missing.append((title, label, case))
                continue
            if not l:
                missing.append((title, label, case))
            lode_s = l["s"] if l else None
            lode_txt = fmt_time(lode_s) if l else "not measured yet"
            cpu_txt = fmt_time(l["cpu_s"]) if l and l.get("cpu_s") is not None else "—"
            if l and l["counters"].get("converged", 1) < 1:
                lode_txt += " (did not converge)"
            if l and l["counters"].get("failed", 0) > 0:
                lode_txt += f" ({l['counters']['failed']:.0f} replicates failed)"
            if not a:
                rows.append(f"| {label} | {lode_txt} | {cpu_txt} | — | — | — |")
            for i, e in enumerate(a):
                rows.append(f"| {label if i == 0 else ''} | {lode_txt if i == 0 else ''} | "
                            f"{cpu_txt if i == 0 else ''} | {e['tool']} | {alt_time(e)} | {alt_ratio(e, lode_s)} |")
        if not rows:
            continue
        w(f"### {title}")
        w("")
        w("| case | Lode | Lode CPU | alternative | its time | Lode is N x faster |")
        w("| --- | ---: | ---: | --- | ---: | ---: |")
        md.extend(rows)
        w("")
    notes = sorted({e["note"] for es in alts.values() for e in es if e.get("note")})
    for n in notes:
        w(f"- {n}")
    if notes:
        w("")

    return missing


def growth_section(w, lode):
    """Lode's time along one variable, the others fixed."""
    w("## Cost growth")
    w("")
    w("Lode's median time along one variable, the others fixed; \"growth exponent\" is "
      "log(t2 / t1) / log(x2 / x1) between neighbouring rows (1 = linear, 2 = quadratic).")
    w("")
    for path, var, series in GROWTH:
        pts = [(x, lode[c]["s"]) for x, c in series if c in lode]
        if len(pts) < 2:
            continue
        w(f"**{path}**")
        w("")
        w(f"| {var} | time | growth exponent |")
        w("| ---: | ---: | ---: |")
        for i, (x, s) in enumerate(pts):
            exp = "" if i == 0 else f"{math.log(s / pts[i - 1][1]) / math.log(x / pts[i - 1][0]):.2f}"
            w(f"| {x:,} | {fmt_time(s)} | {exp} |")
        w("")


def memory_section(w, memory):
    """The peak resident set of the large analysis."""
    w("## Peak memory")
    w("")
    if memory:
        ratio = memory["peak_rss_bytes"] / memory["data_bytes"]
        w(f"The {memory['rows']:,} x {memory['items']} analysis ({', '.join(memory.get('steps', []))}), measured "
          f"by `lode_bench_memory` as the process's peak resident set (VmHWM):")
        w("")
        w("| | |")
        w("| --- | ---: |")
        w(f"| the data ({memory['rows']:,} x {memory['items']} doubles) | {fmt_bytes(memory['data_bytes'])} |")
        w(f"| peak before reading the data | {fmt_bytes(memory['peak_rss_before_load_bytes'])} |")
        w(f"| peak after reading the data | {fmt_bytes(memory['peak_rss_after_load_bytes'])} |")
        w(f"| peak of the whole analysis | {fmt_bytes(memory['peak_rss_bytes'])} |")
        w(f"| peak / data | {ratio:.2f}x |")
        w(f"| peak beyond the data | {fmt_bytes(memory['peak_rss_bytes'] - memory['data_bytes'])} |")
    else:
        w("Not measured yet.")
    w("")


def ceiling_section(w, lode, alts):
    """Lode's correlation rate against the best matrix-multiply rate measured."""
    w("## The practical ceiling: matrix-multiply rate")
    w("")
    rates = []
    mm = lode.get("matmul_n1000")
    if mm and mm["counters"].get("flops"):
        rates.append(("Lode's compiled Eigen, 1000 x 1000 product on all cores", mm["counters"]["flops"]))
    for e in alts.get("matmul_n1000", []):
        if e.get("flops_per_s"):
            rates.append((e["tool"] + ", 1000 x 1000 product", e["flops_per_s"]))
    if rates:
        w("| multiply | rate |")
        w("| --- | ---: |")
        for name, rate in rates:
            w(f"| {name} | {rate / 1e9:.1f} GFLOP/s |")
        w("")
        best_name, best = max(rates, key=lambda x: x[1])
        corr = lode.get("corr_n1000000_p50")
        if corr and corr["counters"].get("flops"):
            c = corr["counters"]["flops"]
            w(f"The 1,000,000 x 50 correlation does n p (p + 1) = {1e6 * 50 * 51 / 1e9:.2f} GFLOP of useful "
              f"arithmetic (the symmetric cross-product) at {c / 1e9:.1f} GFLOP/s: "
              f"**{100 * c / best:.0f}% of the best measured multiply rate** ({best_name}), "
              + (f"{100 * c / mm['counters']['flops']:.0f}% of Lode's own Eigen rate. " if mm and mm['counters'].get('flops') else "")
              + "The remaining time goes to the passes around the product (input checks, missing-value "
              "mask, column means, centring) and to memory traffic"
              + (f"; the input checks alone took {fmt_time(lode['corr_checks_n1000000_p50']['s'])}."
                 if "corr_checks_n1000000_p50" in lode else "."))
            w("")
    else:
        w("Not measured yet.")
        w("")


def write_report(results_dir, out_path, elapsed_s=None, filter_regex=None):
    lode_doc = load(os.path.join(results_dir, "lode.json"))
    py = load(os.path.join(results_dir, "python.json"))
    r = load(os.path.join(results_dir, "r.json"))
    memory = load(os.path.join(results_dir, "memory.json"))
    machine = load(os.path.join(results_dir, "machine.json")) or {}
    machine_end = load(os.path.join(results_dir, "machine-end.json")) or {}
    lode = lode_medians(lode_doc)
    errors = lode_errors(lode_doc)
    available = lode_cases(results_dir)
    alts = alternatives(py, r)
    context = (lode_doc or {}).get("context", {})
    md = []
    w = md.append

    w("# Lode benchmarks: results")
    w("")
    w("Written by `./lode bench` (tests/bench/report.py); rerun it to replace this file. Times are medians "
      "of wall-clock time; \"Lode is N x faster\" is the alternative's median divided by Lode's. "
      "Lode's CPU time is the process's, summed over all its threads (the work done, whatever else runs "
      "on the machine): on a shared, loaded machine wall-clock times are inflated, since the processes "
      "wait for a core, while the CPU time is not. Lode and the alternatives read the same seeded input "
      "files (tests/bench/make_inputs.py).")
    w("")

    machine_section(w, machine, machine_end, context, py, r, elapsed_s, filter_regex)

    # Targets
    w("## Targets")
    w("")
    w("| target | measured | verdict |")
    w("| --- | --- | --- |")
    for t in TARGETS:
        measured, verdict = evaluate_target(t, lode, alts, memory)
        w(f"| {t[0]} | {measured} | {verdict} |")
    w("")

    # Side by side
    missing = side_by_side_section(w, md, lode, alts)

    # Engines (tests/bench/engines.py)
    md.extend(engines_report.section(load(os.path.join(results_dir, "engines.json"))))

    growth_section(w, lode)
    memory_section(w, memory)
    ceiling_section(w, lode, alts)

    # Not measured
    w("## Not measured yet")
    w("")
    if missing or errors:
        skipped = [m for m in missing if available is not None and m[2] in available]
        absent = [m for m in missing if m not in skipped]
        for title in dict.fromkeys(t for t, _, _ in absent):
            cases = ", ".join(f"{label} (`{case}`)" for t, label, case in absent if t == title)
            w(f"- {title}: {cases}. The Lode implementation this needs has not landed yet, so there is no "
              "Lode number.")
        if skipped:
            w(f"- Not run in this (filtered) run: {', '.join(f'`{c}`' for _, _, c in skipped)}.")
        for case, msg in sorted(errors.items()):
            w(f"- `{case}`: the benchmark reported an error: {msg}")
    else:
        w("Every case has a Lode number.")
    w("")

    # Notes
    w("## What exactly is compared")
    w("")
    for note in NOTES:
        w(f"- {note}")
    w("")

    # How
    w("## How this was measured")
    w("")
    reps = sorted({v["repetitions"] for v in lode.values()})
    w(f"- Lode: Google Benchmark (`build/release/tests/bench/lode_bench`), wall-clock time and process CPU "
      f"time (all threads), median of {'/'.join(str(x) for x in reps) or '—'} repetitions; the work runs on "
      "all cores.")
    w("- Alternatives: `alternatives.py` (Debian's python3) and `alternatives.R` (Rscript), median of up to 15 "
      "repeats within a time budget per case (at least 3 unless one run is longer than the budget); a run "
      "longer than the cap is stopped and shown as \"> cap\", so the ratio is a lower bound.")
    w("- numpy and R use the system BLAS shown above (OpenBLAS after `./lode bench` installed it).")
    w("")
    with open(out_path, "w") as f:
        f.write("\n".join(md))


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = ap.add_subparsers(dest="command", required=True)
    m = sub.add_parser("machine")
    m.add_argument("out")
    m.add_argument("--build", default="build/release")
    wr = sub.add_parser("write")
    wr.add_argument("--results", required=True)
    wr.add_argument("--out", required=True)
    wr.add_argument("--elapsed", type=float, default=None)
    wr.add_argument("--filter", default=None)
    args = ap.parse_args()
    if args.command == "machine":
        with open(args.out, "w") as f:
            json.dump(describe_machine(args.build), f, indent=1)
    else:
        write_report(args.results, args.out, args.elapsed, args.filter)


if __name__ == "__main__":
    sys.exit(main())
