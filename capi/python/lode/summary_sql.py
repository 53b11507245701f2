"""A summary computed by a SQL database over a table of answers (one row per respondent, one column
per item, NULL = skipped), with plain aggregates and GROUP BY, read back into a :class:`Summary`.

Identifiers reach SQL only through the driver's identifier quoting (``psycopg2.sql.Identifier`` or
psycopg 3's), values only as query parameters, and every query runs in one read-only transaction
with a single snapshot (REPEATABLE READ), so the parts of the summary agree with each other.
"""

import struct

from .summary import Summary

# The byte form (README, "Summaries"; core/include/lode/summary.hpp).
_MAGIC = b"LODESUMM"
_FORMAT_VERSION = 1
_OVER_LIMIT = 0xFFFFFFFF
# PostgreSQL allows 1664 columns in a row, and a parallel plan carries every aggregate's partial state
# as one: each pair takes six aggregates, so at most 250 pairs go into one query.
_TARGETS_PER_QUERY = 250


def _sql_module(connection):
    """The identifier-quoting module of the connection's driver (psycopg2 or psycopg 3)."""
    root = type(connection).__module__.split(".")[0]
    if root in ("psycopg2", "psycopg"):
        return __import__(root + ".sql", fromlist=["sql"])
    raise TypeError(f"summary_from_sql needs a psycopg2 or psycopg connection (for the driver's identifier "
                    f"quoting); this one comes from {root!r}")


def _fnv1a(data):
    h = 14695981039346656037
    for byte in data:
        h = ((h ^ byte) * 1099511628211) & 0xFFFFFFFFFFFFFFFF
    return h


class _Query:
    """Composes the queries of one summary from identifiers and the caller's parameterised filter."""

    def __init__(self, sql, table, items, where, params, listwise):
        self.sql = sql
        parts = table if isinstance(table, (tuple, list)) else (table,)
        self.table = sql.Identifier(*parts)
        self.cols = [sql.Identifier(c) for c in items]
        self.params = list(params or [])
        conditions = [sql.SQL("({})").format(sql.SQL(where))] if where else []
        self.base = conditions[:]
        if listwise:
            conditions += [sql.SQL("{} IS NOT NULL").format(c) for c in self.cols]
        self.conditions = conditions

    def where(self, extra=(), base_only=False):
        conds = (self.base if base_only else self.conditions) + list(extra)
        if not conds:
            return self.sql.SQL("")
        return self.sql.SQL(" WHERE ") + self.sql.SQL(" AND ").join(conds)

    def select(self, targets, extra=(), tail=None, base_only=False):
        q = self.sql.SQL("SELECT {} FROM {}{}").format(self.sql.SQL(", ").join(targets), self.table,
                                                       self.where(extra, base_only))
        return q + tail if tail is not None else q


def _run(cursor, query, params):
    cursor.execute(query, params or None)
    return cursor.fetchall()


def _row_counts(cursor, q):
    sql = q.sql
    complete = sql.SQL(" AND ").join(sql.SQL("{} IS NOT NULL").format(c) for c in q.cols)
    answered = sql.SQL(" OR ").join(sql.SQL("{} IS NOT NULL").format(c) for c in q.cols)
    targets = [sql.SQL("count(*)"),
               sql.SQL("coalesce(sum(CASE WHEN {} THEN 1 ELSE 0 END), 0)").format(complete),
               sql.SQL("coalesce(sum(CASE WHEN {} THEN 1 ELSE 0 END), 0)").format(answered)]
    targets += [sql.SQL("count({})").format(c) for c in q.cols]
    row = _run(cursor, q.select(targets, base_only=True), q.params)[0]
    total = int(row[0])
    return total, int(row[1]), int(row[2]), sum(total - int(n) for n in row[3:])


def _moments(cursor, q, pairs):
    """Per pair (i <= j): count, mean of i, mean of j, sums of squares and the co-moment, from the
    regr_* aggregates over the rows answering both (Youngs-Cramer updates inside PostgreSQL). Used
    for pairs with an item over the category limit; the others come from their tables."""
    sql = q.sql
    out = {}
    for start in range(0, len(pairs), _TARGETS_PER_QUERY):
        chunk = pairs[start:start + _TARGETS_PER_QUERY]
        targets = [sql.SQL("ARRAY[regr_count({y}, {x})::float8, regr_avgx({y}, {x}), regr_avgy({y}, {x}), "
                           "regr_sxx({y}, {x}), regr_syy({y}, {x}), regr_sxy({y}, {x})]").format(
                               x=q.cols[i], y=q.cols[j]) for i, j in chunk]
        row = _run(cursor, q.select(targets), q.params)[0]
        for pair, values in zip(chunk, row):
            out[pair] = [0.0 if v is None else float(v) for v in values]
    return out


def _few_values(cursor, q, max_categories):
    """Which items have at most max_categories distinct values: whole numbers whose range is that
    narrow in one pass, the others checked one by one (GROUP BY with a LIMIT)."""
    sql = q.sql
    targets = []
    for c in q.cols:
        targets += [sql.SQL("min({})").format(c), sql.SQL("max({})").format(c),
                    sql.SQL("coalesce(sum(CASE WHEN {0} <> floor({0}) THEN 1 ELSE 0 END), 0)").format(c)]
    row = _run(cursor, q.select(targets), q.params)[0]
    few = []
    for j, c in enumerate(q.cols):
        lo, hi, fractional = row[3 * j:3 * j + 3]
        if lo is None or (int(fractional) == 0 and float(hi) - float(lo) + 1 <= max_categories):
            few.append(True)
            continue
        query = q.select([c], extra=[sql.SQL("{} IS NOT NULL").format(c)],
                         tail=sql.SQL(" GROUP BY {} LIMIT %s").format(c))
        few.append(len(_run(cursor, query, q.params + [max_categories + 1])) <= max_categories)
    return few


def _tables(cursor, q, few):
    """Category counts and every pair's contingency table of the items with few values, in one pass.
    The items are taken two at a time; GROUP BY GROUPING SETS over each two such couples (four
    columns, NULL included) gives joint counts from which Python adds up each pair's table and each
    item's counts: a sixth of the hash look-ups of one grouping set per pair."""
    sql = q.sql
    tabled = [j for j, f in enumerate(few) if f]
    couples = [tabled[k:k + 2] for k in range(0, len(tabled), 2)]
    sets = [couples[g] + couples[h] for g in range(len(couples)) for h in range(g + 1, len(couples))]
    if len(couples) == 1:
        sets = [couples[0]]
    counts = {j: {} for j in tabled}
    tables = {}
    if not sets:
        return counts, tables
    targets = [sql.SQL("GROUPING({})").format(q.cols[j]) for j in tabled]
    targets += [q.cols[j] for j in tabled] + [sql.SQL("count(*)")]
    grouping = sql.SQL(", ").join(sql.SQL("({})").format(sql.SQL(", ").join(q.cols[j] for j in cols)) for cols in sets)
    rows = _run(cursor, q.select(targets, tail=sql.SQL(" GROUP BY GROUPING SETS ({})").format(grouping)), q.params)
    # What each set contributes: its cross pairs, and the items and inner pairs of the couples it
    # is the first to hold.
    first = {}
    for k, cols in enumerate(sets):
        for j in cols:
            first.setdefault(j, k)
    position = {j: k for k, j in enumerate(tabled)}
    set_of = {tuple(cols): k for k, cols in enumerate(sets)}
    t = len(tabled)
    for row in rows:
        cols = [j for j in tabled if row[position[j]] == 0]
        k = set_of[tuple(cols)]
        n = int(row[-1])
        value = {j: None if row[t + position[j]] is None else float(row[t + position[j]]) for j in cols}
        for j in cols:
            if first[j] == k and value[j] is not None:
                counts[j][value[j]] = counts[j].get(value[j], 0) + n
        for x in range(len(cols)):
            for y in range(x + 1, len(cols)):
                a, b = cols[x], cols[y]
                same_couple = any(a in c and b in c for c in couples)
                if (same_couple and first[a] != k) or value[a] is None or value[b] is None:
                    continue
                cell = tables.setdefault((a, b), {})
                cell[(value[a], value[b])] = cell.get((value[a], value[b]), 0) + n
    return counts, tables


def _from_tables(counts, tables, p):
    """Categories, tables as lists, and the moments of every pair of tabled items, from the counts."""
    import numpy as np
    cats = [None] * p
    for j, c in counts.items():
        cats[j] = sorted(c.items())
    moments, out = {}, {}
    for j, c in counts.items():
        v = np.array([x for x, _ in cats[j]]), np.array([n for _, n in cats[j]], dtype=float)
        n = v[1].sum()
        m = float(v[1] @ v[0] / n) if n else 0.0
        m2 = float(v[1] @ (v[0] - m) ** 2) if n else 0.0
        moments[(j, j)] = [n, m, m, m2, m2, m2]
    for (a, b), cells in tables.items():
        ia = {x: k for k, (x, _) in enumerate(cats[a])}
        ib = {x: k for k, (x, _) in enumerate(cats[b])}
        table = np.zeros((len(ia), len(ib)))
        for (x, y), n in cells.items():
            table[ia[x], ib[y]] += n
        va, vb = np.array([x for x, _ in cats[a]]), np.array([x for x, _ in cats[b]])
        n = table.sum()
        ra, cb = table.sum(axis=1), table.sum(axis=0)
        ma, mb = (float(ra @ va / n), float(cb @ vb / n)) if n else (0.0, 0.0)
        moments[(a, b)] = [n, ma, mb, float(ra @ (va - ma) ** 2), float(cb @ (vb - mb) ** 2),
                           float((va - ma) @ table @ (vb - mb))]
        out[(a, b)] = table.astype(np.int64).tolist()
    for j, c in enumerate(cats):
        for k in range(j + 1, p):
            if c is not None and cats[k] is not None and (j, k) not in out:
                out[(j, k)] = [[0] * len(cats[k]) for _ in c]
                moments[(j, k)] = [0.0] * 6
    return cats, out, moments


def _encode(items, max_categories, listwise, counts, moments, cats, tables):
    p = len(items)
    out = bytearray(_MAGIC)
    out += struct.pack("<IIII", _FORMAT_VERSION, 1 if listwise else 0, p, max_categories)
    out += struct.pack("<4Q", *counts)
    for name in items:
        b = str(name).encode("utf-8")
        out += struct.pack("<I", len(b)) + b

    def pair(i, j):
        return moments[(i, j)] if i <= j else None

    out += b"".join(struct.pack("<Q", int(round(pair(i, j)[0]))) for i in range(p) for j in range(i, p))
    mean = [[0.0] * p for _ in range(p)]
    m2 = [[0.0] * p for _ in range(p)]
    for (i, j), (n, mx, my, sxx, syy, _) in moments.items():
        mean[i][j], mean[j][i], m2[i][j], m2[j][i] = mx, my, sxx, syy
    for m in (mean, m2):
        out += struct.pack(f"<{p * p}d", *[v for row in m for v in row])
    out += struct.pack(f"<{p * (p - 1) // 2}d", *[moments[(i, j)][5] for i in range(p) for j in range(i + 1, p)])
    for c in cats:
        if c is None:
            out += struct.pack("<I", _OVER_LIMIT)
            continue
        out += struct.pack(f"<I{len(c)}d{len(c)}Q", len(c), *[v for v, _ in c], *[n for _, n in c])
    for a in range(p):
        for b in range(a + 1, p):
            if (a, b) in tables:
                cells = [n for row in tables[(a, b)] for n in row]
                out += struct.pack(f"<{len(cells)}Q", *cells)
    out += struct.pack("<Q", _fnv1a(out))
    return bytes(out)


def summary_from_sql(connection, table, items, where=None, params=None, *, max_categories=11, listwise=False):
    """The summary of ``items`` (column names) of ``table`` (a name, or (schema, name)) computed by
    the database behind ``connection`` (a psycopg2 or psycopg DB-API connection).

    ``where`` is an optional condition written with the driver's placeholders (``%s``) and
    ``params`` its values, e.g. ``where="wave = %s AND region = %s", params=[3, "north"]``; values
    are never put into the SQL text. Names are quoted by the driver. The queries run in a read-only
    REPEATABLE READ transaction (rolled back at the end); the connection must not be inside an open
    transaction. Returns a :class:`Summary` equal to adding the same rows in memory."""
    sql = _sql_module(connection)
    items = [str(c) for c in items]
    if not items:
        raise ValueError("give at least one item column")
    if len(set(items)) != len(items):
        raise ValueError("an item column is named twice")
    if where is not None and not isinstance(where, str):
        raise TypeError("where is a condition text with placeholders; its values go in params")
    status = getattr(getattr(connection, "info", None), "transaction_status", 0)
    if status not in (0, None):
        raise ValueError("the connection is inside an open transaction: commit or roll it back first, so the "
                         "summary can run in a read-only transaction of its own")
    q = _Query(sql, table, items, where, params, listwise)
    autocommit = getattr(connection, "autocommit", False)
    cursor = connection.cursor()
    try:
        if autocommit:
            cursor.execute("BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY")
        else:
            cursor.execute("SET TRANSACTION ISOLATION LEVEL REPEATABLE READ READ ONLY")
        # Room for every grouping set's hash table (a few hundred bytes per group), so that PostgreSQL
        # hashes them all in one pass instead of sorting the rows once per set; this transaction only.
        cursor.execute("SET LOCAL work_mem = '256MB'")
        counts = _row_counts(cursor, q)
        few = _few_values(cursor, q, int(max_categories))
        cats, tables, moments = _from_tables(*_tables(cursor, q, few), len(items))
        rest = [(i, j) for i in range(len(items)) for j in range(i, len(items)) if (i, j) not in moments]
        moments.update(_moments(cursor, q, rest))
    finally:
        try:
            cursor.execute("ROLLBACK") if autocommit else connection.rollback()
        finally:
            cursor.close()
    return Summary.from_bytes(_encode(items, int(max_categories), listwise, counts, moments, cats, tables))
