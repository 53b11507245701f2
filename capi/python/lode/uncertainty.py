"""Item flags and bootstrap intervals of a fitted model, re-exported by ``lode``."""

import ctypes

import numpy as np

from . import _abi, _checks, _native
from ._checks import ArgumentError
from ._native import check, lib
from . import Model, _correlation_of, _fit_options, _lines
from .summary import accepts_summary

# ---- item flags, bootstrap ---------------------------------------------------------------------------

_FLAG_KINDS = {_abi.LODE_FLAG_CROSS_LOADING: "cross_loading", _abi.LODE_FLAG_NO_SALIENT_LOADING: "no_salient_loading",
               _abi.LODE_FLAG_LOW_COMMUNALITY: "low_communality", _abi.LODE_FLAG_HEYWOOD_CASE: "heywood_case"}


class ItemFlags(_native.Handle):
    """Items of a fitted model that need the analyst's attention.

    Attributes: ``codes`` (per item, an int: the sum of the flag bits 1 cross-loading, 2 no salient
    loading, 4 low communality, 8 Heywood case; 0 = none), ``by_item`` (per item, the list of its flag
    names), ``notes`` (per item, the list of its plain-language notes), ``table`` (one dict per flag:
    ``item``, ``kind``, ``factors`` (0-based, largest loading first), ``value``, ``note``),
    ``communalities`` (what the flags were judged on), ``thresholds`` (a dict of the thresholds
    used), ``count`` and ``items_flagged``. The default thresholds are common practice (rules of
    thumb), not results of a method."""

    _free = "lode_item_flags_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_item_flags", pointer)
        self.codes = mat(_abi.LODE_ITEM_FLAGS_CODES)[:, 0].astype(np.int64)
        rows = mat(_abi.LODE_ITEM_FLAGS_TABLE)
        self.communalities = mat(_abi.LODE_ITEM_FLAGS_COMMUNALITIES)[:, 0]
        notes = _lines(txt(_abi.LODE_ITEM_FLAGS_NOTES))
        self.table = []
        for row, note in zip(rows, notes):
            factors = [int(f) for f in row[2:4] if f >= 0]
            self.table.append({"item": int(row[0]), "kind": _FLAG_KINDS.get(int(row[1]), "unknown"),
                               "factors": factors, "value": float(row[4]), "note": note})
        items = len(self.codes)
        self.by_item = [[f["kind"] for f in self.table if f["item"] == i] for i in range(items)]
        self.notes = [_lines(self._item_notes(pointer, i)) for i in range(items)]
        self.count = int(num(_abi.LODE_ITEM_FLAGS_COUNT))
        self.items_flagged = int(num(_abi.LODE_ITEM_FLAGS_ITEMS_FLAGGED))
        self.thresholds = {"salient": num(_abi.LODE_ITEM_FLAGS_SALIENT),
                           "cross_gap": num(_abi.LODE_ITEM_FLAGS_CROSS_LOADING_GAP),
                           "low_communality": num(_abi.LODE_ITEM_FLAGS_LOW_COMMUNALITY),
                           "heywood_uniqueness": num(_abi.LODE_ITEM_FLAGS_HEYWOOD_UNIQUENESS)}

    @staticmethod
    def _item_notes(pointer, item):
        n = ctypes.c_size_t()
        check(lib.lode_item_flags_item_notes(pointer, item, None, 0, ctypes.byref(n)))
        buf = ctypes.create_string_buffer(n.value + 1)
        check(lib.lode_item_flags_item_notes(pointer, item, buf, n.value + 1, None))
        return buf.value.decode("utf-8", "replace")

    def __repr__(self):
        return f"<lode.ItemFlags {self.count} flag(s) on {self.items_flagged} item(s)>"


def item_flags(model, *, salient=0.40, cross_gap=0.20, low_communality=0.20, heywood_uniqueness=0.005):
    """Flags the items of ``model`` (a :class:`Model`) that need a look: a cross-loading (a second
    loading salient too, or within ``cross_gap`` of the item's largest, in absolute value), no salient
    loading (largest absolute loading below ``salient``), a communality below ``low_communality``,
    and Heywood cases (uniqueness at or below ``heywood_uniqueness``, or negative). Pattern loadings
    are judged; communality is 1 - uniqueness. The defaults 0.40, 0.20 and 0.20 are common practice
    (rules of thumb); 0.005 is the lower bound Lode (and R's stats::factanal) put on uniquenesses.
    Returns :class:`ItemFlags`; thresholds outside [0, 1] raise :class:`LodeError`."""
    o = _native.options("lode_item_flags_options", salient=salient,
                        cross_loading_gap=cross_gap, low_communality=low_communality,
                        heywood_uniqueness=heywood_uniqueness)
    _checks.instance(model, Model, "model", "a fitted model (lode.fit)")
    ptr = ctypes.c_void_p()
    check(lib.lode_item_flags_compute(model.pointer, ctypes.byref(o), ctypes.byref(ptr)))
    return ItemFlags(ptr.value)


class Bootstrap(_native.Handle):
    """Percentile bootstrap intervals of a rotated factor solution.

    Attributes (numpy arrays): ``loadings`` (the full-sample pattern, items x factors),
    ``loadings_lower``, ``loadings_upper`` (the percentile interval at ``level``), ``loadings_se``
    (the replicates' standard deviation); likewise ``uniquenesses*`` (per item) and
    ``factor_correlations*`` (factors x factors; the identity with zero-width intervals when the
    solution is orthogonal); ``min_congruence`` (per used replicate, its smallest matched
    congruence). Numbers: ``replicates`` (requested), ``replicates_used``, ``replicates_failed``
    (excluded, with their reasons in ``failures``), ``replicates_poorly_matched`` (some factor matched
    with congruence below 0.85), ``level``, ``oblique``. Text: ``alignment`` (how replicates were
    aligned to the full sample), ``notes``. With ``keep_replicates=True`` also
    ``replicate_loadings`` (used x items x factors), ``replicate_uniquenesses`` (used x items) and
    ``replicate_factor_correlations`` (used x factors x factors), aligned; otherwise None."""

    _free = "lode_bootstrap_free"

    def __init__(self, pointer, kept):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_bootstrap", pointer)
        def with_interval(name):  # the estimate, the interval's bounds and the standard error
            return [mat(getattr(_abi, f"LODE_BOOTSTRAP_{name}{part}")) for part in ("", "_LOWER", "_UPPER", "_SE")]

        self.loadings, self.loadings_lower, self.loadings_upper, self.loadings_se = with_interval("LOADINGS")
        self.uniquenesses, self.uniquenesses_lower, self.uniquenesses_upper, self.uniquenesses_se = (
            u[:, 0] for u in with_interval("UNIQUENESSES"))
        (self.factor_correlations, self.factor_correlations_lower, self.factor_correlations_upper,
         self.factor_correlations_se) = with_interval("FACTOR_CORRELATIONS")
        self.min_congruence = mat(_abi.LODE_BOOTSTRAP_MIN_CONGRUENCE)[:, 0]
        self.replicates = int(num(_abi.LODE_BOOTSTRAP_REPLICATES))
        self.replicates_used = int(num(_abi.LODE_BOOTSTRAP_USED))
        self.replicates_failed = int(num(_abi.LODE_BOOTSTRAP_FAILED))
        self.replicates_poorly_matched = int(num(_abi.LODE_BOOTSTRAP_POORLY_MATCHED))
        self.level = num(_abi.LODE_BOOTSTRAP_LEVEL)
        items, factors = int(num(_abi.LODE_BOOTSTRAP_ITEMS)), int(num(_abi.LODE_BOOTSTRAP_FACTORS))
        self.oblique = bool(num(_abi.LODE_BOOTSTRAP_OBLIQUE))
        self.alignment = txt(_abi.LODE_BOOTSTRAP_ALIGNMENT)
        self.failures = _lines(txt(_abi.LODE_BOOTSTRAP_FAILURES))
        self.notes = _lines(txt(_abi.LODE_BOOTSTRAP_NOTES))
        self.replicate_loadings = self.replicate_uniquenesses = self.replicate_factor_correlations = None
        if kept:
            used = self.replicates_used
            self.replicate_loadings = mat(_abi.LODE_BOOTSTRAP_REPLICATE_LOADINGS).reshape(used, items, factors)
            self.replicate_uniquenesses = mat(_abi.LODE_BOOTSTRAP_REPLICATE_UNIQUENESSES).reshape(used, items)
            self.replicate_factor_correlations = mat(
                _abi.LODE_BOOTSTRAP_REPLICATE_FACTOR_CORRELATIONS).reshape(used, factors, factors)

    def __repr__(self):
        return f"<lode.Bootstrap {self.replicates_used} of {self.replicates} replicates, level {self.level}>"


@accepts_summary(needs_rows="bootstrap replicates")
def bootstrap(X=None, *, factors=None, method="ml", rotation="oblimin", replicates=1000, level=0.95, seed=None, progress=None,
              missing="pairwise", correlation="pearson", smooth=False, max_iterations=1000, tolerance=1e-9,
              min_uniqueness=0.005, threads=0, replicate_random_starts=0, keep_replicates=False, item_names=None,
              **rotation_keywords):
    """Percentile bootstrap intervals (Efron & Tibshirani 1993) for the rotated loadings, the
    uniquenesses and the factor correlations of the solution :func:`fit` gives with the same
    arguments.

    ``X``: raw data (rows are respondents, NaN missing; ``missing`` and ``correlation`` as in
    :func:`fit`) or a :class:`Correlation` of raw data. ``factors`` (at least 1), ``method``,
    ``rotation`` and ``rotation_keywords`` as in :func:`fit`. Respondents are resampled
    ``replicates`` times with replacement; replicate i draws from stream i of ``seed`` (None: the
    library's default seed 1), so results do not depend on ``threads``. ``seed`` also seeds the
    rotation's random starts, as in :func:`fit`; each replicate's rotation starts from the unrotated
    loadings plus ``replicate_random_starts`` random starts (-1: as the rotation's own default).
    Each replicate is aligned to the full-sample solution by matching factors by Tucker's congruence
    with sign flips (``alignment`` says so); replicates that fail or do not converge are excluded and
    counted (``replicates_failed``, ``failures``). ``level`` is the two-sided coverage.
    ``progress(done, total)`` is called with the replicates done; returning False cancels
    (:class:`LodeError`, status "cancelled", no result). Returns :class:`Bootstrap`."""
    if X is None:
        given = [k for k in ("corr", "cov") if k in rotation_keywords]
        raise ArgumentError("the bootstrap resamples respondents, so it needs their raw data X (rows x items)"
                            + (f"; {given[0]}= cannot be resampled" if given else ""))
    if _checks.whole(factors, "factors", -2 ** 31, 2 ** 31 - 1) < 1:
        raise ArgumentError("the bootstrap needs the number of factors (factors >= 1)")
    c = _correlation_of(X, None, None, None, correlation, missing, smooth, item_names)
    o, keep = _fit_options(factors, method, max_iterations, tolerance, min_uniqueness, rotation, seed,
                           rotation_keywords, "bootstrap")
    b = _native.options("lode_bootstrap_options", replicates=replicates,
                        level=level, threads=threads, replicate_random_starts=replicate_random_starts,
                        keep_replicates=1 if keep_replicates else 0)
    if seed is not None:
        _checks.put(b, "seed", seed)
    callback = _native.attach_progress(b, progress)
    ptr = ctypes.c_void_p()
    check(lib.lode_bootstrap_compute(c.pointer, ctypes.byref(o), ctypes.byref(b), ctypes.byref(ptr)))
    del keep, callback
    return Bootstrap(ptr.value, bool(keep_replicates))
