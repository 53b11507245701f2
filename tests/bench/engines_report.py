"""The RESULTS.md section for tests/bench/engines.py's measurements (summaries computed by PostgreSQL
and Dask against exporting the rows). Kept apart from report.py, which reads Google Benchmark's JSON."""


def _time(s):
    return f"{s:.1f} s" if s >= 1 else f"{s * 1e3:.3g} ms"


def _bytes(b):
    if b >= 2**30:
        return f"{b / 2**30:.2f} GiB"
    if b >= 2**20:
        return f"{b / 2**20:.1f} MiB"
    return f"{b / 2**10:.1f} KiB"


def section(doc):
    """Markdown lines for the engines section, or [] when the run had no engine measurements."""
    if not doc or not doc.get("results"):
        return []
    rows, items = doc["rows"], doc["items"]
    out = [f"## Summaries where the data live ({rows:,} rows x {items} items)", "",
           f"Invented answers (5 categories, 8% skipped at random), {doc['factors']} factors fitted with Lode's "
           "defaults; each route runs once (`tests/bench/engines.py`). \"Time to a fitted model\" runs from the "
           "first query to the loadings; the client CPU is the Python process's own (the database's and the "
           "Dask workers' work is not in it). Every route's loadings were checked equal to the in-memory fit "
           "(largest difference shown).", "",
           "| route | time to a fitted model | of which | client CPU | against exporting the rows | loadings differ by |",
           "| --- | ---: | --- | ---: | ---: | ---: |"]
    export = next((r for r in doc["results"] if r["case"] == "postgres_export"), None)
    for r in doc["results"]:
        parts = ", ".join(f"{k} {_time(v)}" for k, v in r.get("parts", {}).items())
        against = "—" if export is None or r is export else f"{export['median_s'] / r['median_s']:.2f}x faster" \
            if r["median_s"] < export["median_s"] else f"{r['median_s'] / export['median_s']:.2f}x slower"
        gap = f"{r['loadings_gap']:.1e}" if "loadings_gap" in r else "(the reference)"
        out.append(f"| {r['route']} | {_time(r['median_s'])} | {parts} | {_time(r['client_cpu_s'])} | {against} | {gap} |")
    sizes = doc.get("sizes", {})
    out += ["", "| what travels or is kept | size | against the rows as doubles |", "| --- | ---: | ---: |"]
    data = sizes.get("data_bytes")
    for key, label in (("data_bytes", "the rows as doubles"), ("table_bytes", "the PostgreSQL table on disk"),
                       ("summary_bytes", "the summary's byte form (moments, category counts, pair tables)")):
        if key in sizes and data:
            out.append(f"| {label} | {_bytes(sizes[key])} | {sizes[key] / data:.2g}x |")
    out += ["", "The summary's size depends on the items and categories, not on the rows: it is what crosses "
            "the network, while exporting moves every row. Where the database computes the summary more "
            "slowly than the rows can be exported, the gain is in what leaves the server and in what the "
            "client must hold in memory, not in time.", ""]
    return out
