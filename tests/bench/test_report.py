#!/usr/bin/python3
"""Checks the report generator (report.py) on small invented result files: medians taken from the
aggregates, ratios, target verdicts with margins, cost-growth exponents, stopped alternatives and the
"not measured yet" lines. The numbers are invented for this test only."""
import json
import os
import sys
import tempfile
import unittest

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import report  # noqa: E402


def gb_run(case, ms, family="BM_X", aggregate=None, **counters):
    """One Google Benchmark JSON entry (a repetition, or an aggregate when `aggregate` is given)."""
    run_name = f"{family}/{case}/real_time"
    entry = {"name": run_name + (f"_{aggregate}" if aggregate else ""), "run_name": run_name,
             "run_type": "aggregate" if aggregate else "iteration", "repetitions": 3,
             "real_time": ms, "cpu_time": ms / 10, "time_unit": "ms"}
    if aggregate:
        entry["aggregate_name"] = aggregate
    entry.update(counters)
    return entry


class ReportTest(unittest.TestCase):
    def setUp(self):
        self.dir = tempfile.TemporaryDirectory()
        d = self.dir.name
        lode = {"context": {"eigen_simd": "SSE, SSE2", "lode_threads": "2"}, "benchmarks": [
            # repetitions 40, 50, 90 ms: the median aggregate (50) must win over the mean (60)
            gb_run("corr_n1000000_p50", 40, "BM_Correlation", flops=2e9),
            gb_run("corr_n1000000_p50", 50, "BM_Correlation", flops=2e9),
            gb_run("corr_n1000000_p50", 90, "BM_Correlation", flops=2e9),
            gb_run("corr_n1000000_p50", 60, "BM_Correlation", aggregate="mean", flops=2e9),
            gb_run("corr_n1000000_p50", 50, "BM_Correlation", aggregate="median", flops=2.55e9),
            gb_run("corr_n10000_p50", 0.5, "BM_Correlation", aggregate="median"),
            gb_run("corr_n100000_p50", 5.0, "BM_Correlation", aggregate="median"),
            gb_run("matmul_n1000", 100, "BM_MatrixMultiplyRate", aggregate="median", flops=20e9),
            gb_run("ml_p100_k10", 20, "BM_Extraction", aggregate="median"),
            gb_run("pa_p60_n2000_r1000", 250, "BM_ParallelAnalysis", aggregate="median"),
        ]}
        python = {"tool_versions": {"numpy": "1.0"}, "blas": [], "results": [
            {"case": "corr_n1000000_p50", "tool": "numpy.corrcoef", "median_s": 0.2, "repeats": 3},
            {"case": "matmul_n1000", "tool": "numpy A @ B (system BLAS)", "median_s": 0.05, "repeats": 3,
             "flops_per_s": 40e9},
            {"case": "ml_oblimin20_p100_k10", "tool": "statsmodels x", "stopped_after_s": 60.0},
        ]}
        r = {"tool_versions": {"R": "4.2.2"}, "blas": {"blas": "libopenblas"}, "results": [
            {"case": "ml_p100_k10", "tool": "R factanal(covmat)", "median_s": 0.04, "repeats": 15},
            {"case": "pa_p60_n2000_r1000", "tool": "R loop: rnorm, cor, eigen", "median_s": 20.0, "repeats": 1},
        ]}
        memory = {"input": "corr_n1000000_p50", "rows": 1000000, "items": 50, "data_bytes": 400e6,
                  "peak_rss_before_load_bytes": 3e6, "peak_rss_after_load_bytes": 403e6,
                  "peak_rss_bytes": 450e6, "steps": ["correlation"]}
        machine = {"date": "2026-01-01 00:00 UTC", "cpu": "Test CPU", "cores": 2, "memory_bytes": 2**34,
                   "load_average": [6.0, 5.0, 4.0], "system_blas": "openblas", "compiler": "g++ 12"}
        for name, doc in (("lode", lode), ("python", python), ("r", r), ("memory", memory), ("machine", machine)):
            with open(os.path.join(d, name + ".json"), "w") as f:
                json.dump(doc, f)
        self.out = os.path.join(d, "RESULTS.md")
        report.write_report(d, self.out, elapsed_s=300)
        with open(self.out) as f:
            self.text = f.read()

    def tearDown(self):
        self.dir.cleanup()

    def line(self, start):
        hits = [l for l in self.text.splitlines() if l.startswith(start)]
        self.assertEqual(len(hits), 1, f"expected one line starting with {start!r} in\n{self.text}")
        return hits[0]

    def test_median_aggregate_and_ratio(self):
        # corrcoef 0.2 s / Lode median 50 ms = 4x (the mean, 60 ms, would give 3.33x)
        row = self.line("| n = 1,000,000, p = 50 |")
        self.assertIn("| 50 ms |", row)
        self.assertIn("| 4.00x |", row)
        # the CPU column beside the wall-clock one: the median aggregate's cpu_time (50 ms / 10)
        self.assertIn("| 50 ms | 5 ms |", row)

    def test_targets(self):
        self.assertIn("**met** (4.00x against 1.00x required)", self.line("| Correlation of 1,000,000 x 50"))
        # factanal 0.04 s / Lode 0.02 s = 2x < 3x
        self.assertIn("**not met**: 2.00x against 3.00x required", self.line("| ML extraction, p = 100"))
        # 0.25 s against 0.1 s: 2.5 times the limit; 20 s / 0.25 s = 80x < 100x
        self.assertIn("**not met**: 2.50x the limit of 100 ms", self.line("| Parallel analysis, 1000 replicates"))
        self.assertIn("| 250 ms (CPU 25 ms) |", self.line("| Parallel analysis, 1000 replicates"))
        self.assertIn("**not met**: 80.0x against 100x required (1.25x short)", self.line("| Parallel analysis: at least"))
        self.assertIn("not measured yet", self.line("| Polychoric matrix, 60 items"))
        self.assertIn("not measured yet", self.line("| ML + oblimin with 20 random starts"))
        self.assertIn("**met** (1.12x against a limit of 2x)", self.line("| Peak memory"))

    def test_stopped_alternative_is_a_lower_bound(self):
        self.assertIn("> 60 s (stopped)", self.text)

    def test_not_measured_lines(self):
        line = self.line("- Polychoric correlation matrix")
        self.assertIn("60 items (`polychoric_p60_n2000`)", line)
        self.assertIn("has not landed yet", line)
        self.assertIn("(`bootstrap_n500_p30_k3_r1000`)", self.text)
        self.assertNotIn("(`corr_n1000000_p50`)", self.line("- Correlation matrix"))

    def test_filtered_run_tells_skipped_from_absent(self):
        # A case lode_bench has but this run did not time is "not run", not "not landed".
        with open(os.path.join(self.dir.name, "lode-cases.txt"), "w") as f:
            f.write("BM_Polychoric/polychoric_p60_n2000/real_time\n")
        report.write_report(self.dir.name, self.out, filter_regex="corr")
        with open(self.out) as f:
            text = f.read()
        self.assertIn("Not run in this (filtered) run: `polychoric_p60_n2000`.", text)
        self.assertNotIn("60 items (`polychoric_p60_n2000`)", text)
        self.assertIn("| cases | only those matching `corr` |", text)

    def test_growth_exponent(self):
        # 0.5 ms -> 5 ms -> 50 ms for 10x more rows each time: exponent 1.00
        self.assertIn("| 100,000 | 5 ms | 1.00 |", self.text)
        self.assertIn("| 1,000,000 | 50 ms | 1.00 |", self.text)

    def test_ceiling_and_machine(self):
        self.assertIn("| numpy A @ B (system BLAS), 1000 x 1000 product | 40.0 GFLOP/s |", self.text)
        # 2.55 GFLOP/s of 40 GFLOP/s = 6%
        self.assertIn("**6% of the best measured multiply rate**", self.text)
        self.assertIn("The machine was shared during this run", self.text)
        self.assertIn("| CPU | Test CPU, 2 cores |", self.text)


class EnginesSectionTest(unittest.TestCase):
    """engines_report.section on an invented engines.json (numbers invented for this test only)."""

    def test_routes_ratios_and_sizes(self):
        import engines_report
        doc = {"rows": 1000, "items": 30, "factors": 2, "sizes": {"data_bytes": 240000, "summary_bytes": 2400},
               "results": [
                   {"case": "postgres_summary", "route": "SQL", "median_s": 2.0, "client_cpu_s": 0.5,
                    "parts": {"summary": 1.9, "fit": 0.1}, "loadings_gap": 1e-14},
                   {"case": "postgres_export", "route": "export", "median_s": 8.0, "client_cpu_s": 4.0,
                    "parts": {"export": 5.0, "fit": 3.0}},
                   {"case": "dask_w1", "route": "dask", "median_s": 16.0, "client_cpu_s": 0.1, "loadings_gap": 0.0}]}
        text = "\n".join(engines_report.section(doc))
        self.assertIn("(1,000 rows x 30 items)", text)
        self.assertIn("| SQL | 2.0 s | summary 1.9 s, fit 100 ms | 500 ms | 4.00x faster | 1.0e-14 |", text)
        self.assertIn("| dask | 16.0 s |  | 100 ms | 2.00x slower | 0.0e+00 |", text)
        self.assertIn("| export | 8.0 s | export 5.0 s, fit 3.0 s | 4.0 s | — | (the reference) |", text)
        self.assertIn("| the summary's byte form (moments, category counts, pair tables) | 2.3 KiB | 0.01x |", text)
        self.assertEqual(engines_report.section(None), [])


if __name__ == "__main__":
    unittest.main()
