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


def _moments(cursor, q, p):
    """Per pair (i <= j): count, mean of i, mean of j, sums of squares and the co-moment, from the
    regr_* aggregates over the rows answering both (Youngs-Cramer updates inside PostgreSQL)."""
    sql = q.sql
    pairs = [(i, j) for i in range(p) for j in range(i, p)]
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


def _categories(cursor, q, p, max_categories):
    """Each item's distinct values and counts, or None when it has more than max_categories."""
    sql = q.sql
    cats = []
    for c in q.cols:
        query = q.select([c, sql.SQL("count(*)")], extra=[sql.SQL("{} IS NOT NULL").format(c)],
                         tail=sql.SQL(" GROUP BY {} ORDER BY {} LIMIT %s").format(c, c))
        rows = _run(cursor, query, q.params + [max_categories + 1])
        cats.append(None if len(rows) > max_categories else [(float(v), int(n)) for v, n in rows])
    return cats


def _tables(cursor, q, cats):
    """Every pair's contingency table in one pass: GROUP BY GROUPING SETS ((a, b), ...)."""
    sql = q.sql
    tabled = [j for j, c in enumerate(cats) if c is not None]
    pairs = [(a, b) for k, a in enumerate(tabled) for b in tabled[k + 1:]]
    tables = {(a, b): [[0] * len(cats[b]) for _ in cats[a]] for a, b in pairs}
    if not pairs:
        return tables
    index = [None if c is None else {v: k for k, (v, _) in enumerate(c)} for c in cats]
    sets = sql.SQL(", ").join(sql.SQL("({}, {})").format(q.cols[a], q.cols[b]) for a, b in pairs)
    targets = [sql.SQL("GROUPING({})").format(q.cols[j]) for j in tabled]
    targets += [q.cols[j] for j in tabled] + [sql.SQL("count(*)")]
    rows = _run(cursor, q.select(targets, tail=sql.SQL(" GROUP BY GROUPING SETS ({})").format(sets)), q.params)
    t = len(tabled)
    for row in rows:
        grouped = [tabled[k] for k in range(t) if row[k] == 0]
        a, b = grouped
        va, vb = row[t + tabled.index(a)], row[t + tabled.index(b)]
        if va is None or vb is None:
            continue  # a missing answer: not part of the pair's table
        tables[(a, b)][index[a][float(va)]][index[b][float(vb)]] += int(row[-1])
    return tables


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
        counts = _row_counts(cursor, q)
        moments = _moments(cursor, q, len(items))
        cats = _categories(cursor, q, len(items), int(max_categories))
        tables = _tables(cursor, q, cats)
    finally:
        try:
            cursor.execute("ROLLBACK") if autocommit else connection.rollback()
        finally:
            cursor.close()
    return Summary.from_bytes(_encode(items, int(max_categories), listwise, counts, moments, cats, tables))
