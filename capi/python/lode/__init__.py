"""Lode from Python: exploratory factor analysis over liblode's stable C interface.

The package is pure Python (ctypes and numpy). It loads liblode from the path in the
``LODE_LIBRARY`` environment variable, else from beside the package, else through the system
loader. Data are 2-D arrays with respondents in rows and items in columns; NaN is a missing
answer. Every error of the library is raised as :class:`LodeError` with the library's message.
"""

import ctypes
import warnings

import numpy as np

from . import _abi, _checks, _native
from ._native import LodeError, lib, check
from .summary import Summary, accepts_summary
from .summary_sql import summary_from_sql
from ._checks import ArgumentError

__all__ = ["LodeError", "ArgumentError", "version", "correlation", "Correlation", "factorability", "Factorability",
           "count_factors", "n_factors", "parallel_analysis", "map_test", "FactorCount", "rotate", "Rotation", "fit", "Model",
           "scores", "Scores", "alpha", "Alpha", "omega", "Omega", "congruence", "Comparison", "item_flags",
           "ItemFlags", "bootstrap", "Bootstrap", "Summary", "summary_from_sql", "schmid_leiman", "SchmidLeiman",
           "compare_groups", "GroupComparison", "fit_pattern", "RestrictedFit", "replicate", "Replication",
           "holdout_check", "HoldoutCheck"]

# The numbers of a correlation handle, by attribute name (keys of lode.h: LODE_CORRELATION_<NAME>).
_CORRELATION_VALUES = {name: getattr(_abi, "LODE_CORRELATION_" + name.upper()) for name in (
    "items", "n_obs", "rows_total", "rows_complete", "rows_used", "min_pair_count", "missing_fraction",
    "positive_definite", "smoothed", "smallest_eigenvalue_before", "smoothing_max_change", "smoothing_rms_change",
    "smoothing_converged", "smoothing_iterations", "pairs_not_converged", "pairs_at_bound", "pairs_zero_cell_corrected")}

_KINDS = {"pearson": _abi.LODE_COEFFICIENT_PEARSON, "spearman": _abi.LODE_COEFFICIENT_SPEARMAN,
          "polychoric": _abi.LODE_COEFFICIENT_POLYCHORIC}
_ZERO_CELLS = {"none": _abi.LODE_ZERO_CELLS_NONE, "at_bound": _abi.LODE_ZERO_CELLS_AT_BOUND,
               "always": _abi.LODE_ZERO_CELLS_ALWAYS}
_MISSING = {"pairwise": _abi.LODE_MISSING_PAIRWISE, "listwise": _abi.LODE_MISSING_LISTWISE,
            "em": _abi.LODE_MISSING_EM}
_CORRELATION_EM_VALUES = {name: getattr(_abi, "LODE_CORRELATION_EM_" + name.upper()) for name in (
    "converged", "iterations", "final_change", "tolerance", "max_iterations")}


def version():
    """The library's versions as a dict: ``version`` (release, e.g. "0.1.0") and ``abi``
    (major, minor) of the C interface."""
    v = lib.lode_version().contents
    return {"version": v.string.decode(), "release": (v.major, v.minor, v.patch), "abi": (v.abi_major, v.abi_minor)}


_choice = _checks.choice


class _Data(_native.Handle):
    """A lode_data handle (raw responses or a correlation/covariance matrix)."""

    _free = "lode_data_free"


def _names_of(X, item_names):
    if item_names is None and hasattr(X, "columns"):
        item_names = [str(c) for c in X.columns]
    return item_names


def _make_data(X=None, corr=None, cov=None, n_obs=None, item_names=None):
    if isinstance(X, Summary) and corr is None and cov is None and n_obs is None:
        return X._data()
    given = [a is not None for a in (X, corr, cov)]
    if sum(given) != 1:
        raise ArgumentError("give exactly one of X (raw data), corr (a correlation matrix) or cov (a covariance matrix)")
    ptr = ctypes.c_void_p()
    names = _names_of(X, item_names)
    if X is not None:
        if n_obs is not None:
            raise ArgumentError("n_obs is taken from the data when X is given; pass it only with corr= or cov=")
        a, rows, cols, rs, cs = _native.as_strided_matrix(X, "X")
        check(lib.lode_data_from_raw(_native.data_pointer(a), rows, cols, rs, cs, ctypes.byref(ptr)))
    else:
        m = corr if corr is not None else cov
        a, rows, cols, rs, cs = _native.as_strided_matrix(m, "corr" if corr is not None else "cov")
        if rows != cols:
            raise ArgumentError(f"a correlation or covariance matrix must be square; this one is {rows} x {cols}")
        fn = lib.lode_data_from_correlation if corr is not None else lib.lode_data_from_covariance
        n = 0 if n_obs is None else _checks.whole(n_obs, "n_obs")
        check(fn(_native.data_pointer(a), rows, rs, cs, n, ctypes.byref(ptr)))
    data = _Data(ptr.value)
    if names is not None:
        names = [None if s is None else str(s) for s in names]
        arr = (ctypes.c_char_p * len(names))(*[None if s is None else s.encode() for s in names])
        check(lib.lode_data_set_item_names(data.pointer, arr, len(names)))
    return data


class Correlation(_native.Handle):
    """A correlation matrix computed by Lode, with what went into it.

    Attributes: ``matrix`` (items x items), ``pair_counts`` (observations behind each
    correlation), ``eigenvalues`` (largest first), ``smc`` (squared multiple correlations; None
    when the matrix is not positive definite), ``reduced_eigenvalues`` (SMCs on the diagonal; None
    likewise), ``n_obs`` (the sample size for tests: listwise, rows used; pairwise, the smallest pair
    count), ``rows_total``, ``rows_complete``, ``rows_used``, ``min_pair_count``,
    ``missing_fraction``, ``positive_definite``, ``smoothed`` and ``smoothing`` (a dict describing
    the Higham smoothing when it was applied), ``notes`` (plain-language remarks). For polychoric
    correlations of raw data also ``standard_errors`` (items x items, before smoothing; two-step:
    the thresholds are taken as known, so they run smaller than full maximum likelihood standard
    errors, by about 8% in one simulated pair),
    ``thresholds`` (a list with each item's thresholds) and ``polychoric`` (a dict counting pairs
    ``not_converged``, ``at_bound`` and ``zero_cell_corrected``); otherwise these are None.
    With ``missing="em"``, ``em`` is a dict with the EM estimate's ``means``, ``covariance``
    (maximum likelihood, divisor ``rows_used``) and its convergence (``converged``, ``iterations``,
    ``final_change``, ``tolerance``, ``max_iterations``); otherwise None.
    ``numpy.asarray(result)`` gives the matrix.
    """

    _free = "lode_correlation_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        fm = lib.lode_correlation_matrix
        self.matrix = _native.get_matrix(fm, pointer, _abi.LODE_CORRELATION_MATRIX)
        # Counts arrive as doubles: 2**63 - 1 (the largest n_obs) rounds up to 2**63, one past int64.
        counts = _native.get_matrix(fm, pointer, _abi.LODE_CORRELATION_PAIR_COUNTS)
        self.pair_counts = np.minimum(counts, np.nextafter(2.0 ** 63, 0)).astype(np.int64)
        self.pair_counts[counts >= 2.0 ** 63] = 2 ** 63 - 1
        self.eigenvalues = _native.get_matrix(fm, pointer, _abi.LODE_CORRELATION_EIGENVALUES)[:, 0]
        v = {k: _native.get_value(lib.lode_correlation_value, pointer, key) for k, key in _CORRELATION_VALUES.items()}
        self.positive_definite = bool(v["positive_definite"])
        try:
            self.smc = _native.get_matrix(fm, pointer, _abi.LODE_CORRELATION_SMC)[:, 0]
            self.reduced_eigenvalues = _native.get_matrix(fm, pointer, _abi.LODE_CORRELATION_REDUCED_EIGENVALUES)[:, 0]
        except LodeError:
            self.smc = None
            self.reduced_eigenvalues = None
        self.n_obs = int(v["n_obs"])
        self.rows_total = int(v["rows_total"])
        self.rows_complete = int(v["rows_complete"])
        self.rows_used = int(v["rows_used"])
        self.min_pair_count = int(v["min_pair_count"])
        self.missing_fraction = v["missing_fraction"]
        self.smoothed = bool(v["smoothed"])
        self.smoothing = {
            "applied": self.smoothed,
            "smallest_eigenvalue_before": v["smallest_eigenvalue_before"],
            "max_change": v["smoothing_max_change"],
            "rms_change": v["smoothing_rms_change"],
            "converged": bool(v["smoothing_converged"]),
            "iterations": int(v["smoothing_iterations"]),
        }
        self.standard_errors = self.thresholds = self.polychoric = None
        if v["pairs_not_converged"] or self._kind(pointer) == _KINDS["polychoric"]:
            try:
                self.standard_errors = _native.get_matrix(fm, pointer, _abi.LODE_CORRELATION_STANDARD_ERRORS)
                th = _native.get_matrix(fm, pointer, _abi.LODE_CORRELATION_THRESHOLDS)
                self.thresholds = [row[~np.isnan(row)] for row in th]
                self.polychoric = {"not_converged": int(v["pairs_not_converged"]),
                                   "at_bound": int(v["pairs_at_bound"]),
                                   "zero_cell_corrected": int(v["pairs_zero_cell_corrected"])}
            except LodeError:  # a polychoric kind given with a matrix: no per-pair estimates
                pass
        self.em = None
        if int(_native.get_value(lib.lode_correlation_value, pointer, _abi.LODE_CORRELATION_MISSING)) == _MISSING["em"]:
            try:
                self.em = {k: _native.get_value(lib.lode_correlation_value, pointer, key)
                           for k, key in _CORRELATION_EM_VALUES.items()}
            except LodeError:  # the em rule given with a matrix: nothing was estimated
                pass
        if self.em is not None:
            self.em["converged"] = bool(self.em["converged"])
            self.em["iterations"] = int(self.em["iterations"])
            self.em["max_iterations"] = int(self.em["max_iterations"])
            self.em["means"] = _native.get_matrix(fm, pointer, _abi.LODE_CORRELATION_EM_MEANS)[:, 0]
            self.em["covariance"] = _native.get_matrix(fm, pointer, _abi.LODE_CORRELATION_EM_COVARIANCE)
        text = _native.get_text(lib.lode_correlation_text, pointer, _abi.LODE_CORRELATION_NOTES)
        self.notes = text.split("\n") if text else []

    @staticmethod
    def _kind(pointer):
        return int(_native.get_value(lib.lode_correlation_value, pointer, _abi.LODE_CORRELATION_KIND))

    def __array__(self, dtype=None, copy=None):
        return self.matrix if dtype is None else self.matrix.astype(dtype)

    def __repr__(self):
        return f"<lode.Correlation {self.matrix.shape[0]} items, n_obs={self.n_obs}>"


def _correlate(data, method, missing, smooth, min_eigenvalue=1e-6, min_pair_observations=3, threads=0,
               max_categories=10, zero_cells="at_bound", zero_cell_add=0.5, progress=None, em_tolerance=1e-10,
               em_max_iterations=1000):
    o = _native.options("lode_correlation_options",
                        kind=_choice(method, _KINDS, "correlation method"),
                        missing=_choice(missing, _MISSING, "missing-value policy"),
                        smooth=1 if smooth else 0, min_eigenvalue=min_eigenvalue,
                        min_pair_observations=min_pair_observations, threads=threads,
                        max_categories=max_categories, zero_cells=_choice(zero_cells, _ZERO_CELLS, "zero-cell policy"),
                        zero_cell_add=zero_cell_add, em_tolerance=em_tolerance,
                        em_max_iterations=em_max_iterations)
    callback = _native.attach_progress(o, progress)
    ptr = ctypes.c_void_p()
    check(lib.lode_correlation_compute(data.pointer, ctypes.byref(o), ctypes.byref(ptr)))
    del callback
    return Correlation(ptr.value)


@accepts_summary
def correlation(X=None, *, corr=None, cov=None, n_obs=None, method="pearson", missing="pairwise", smooth=False,
                min_eigenvalue=1e-6, min_pair_observations=3, item_names=None, threads=0, max_categories=10,
                zero_cells="at_bound", zero_cell_add=0.5, progress=None, em_tolerance=1e-10, em_max_iterations=1000):
    """The correlation matrix of raw data ``X`` (rows are respondents, columns items, NaN missing),
    or a given correlation matrix ``corr`` / covariance matrix ``cov`` with its ``n_obs``, checked.

    ``method`` is "pearson", "spearman" or "polychoric" (ordinal items, Olsson's two-step
    estimate; tetrachoric for binary items; ``max_categories``, ``zero_cells`` "none", "at_bound"
    or "always" with ``zero_cell_add``, ``threads``, and ``progress(done, total)`` returning False
    to cancel); ``missing`` is "pairwise", "listwise" or "em" (Pearson only: maximum likelihood
    means and covariances under missing at random by the EM algorithm, Dempster, Laird & Rubin
    1977, stopping when no standardised mean or covariance changes by more than ``em_tolerance`` or
    after ``em_max_iterations``, with ``threads`` and ``progress`` (iterations) as above; ``n_obs``
    is then every row with an answer); ``smooth``
    replaces a matrix that is not positive definite by the nearest correlation matrix with
    eigenvalues at least ``min_eigenvalue`` (Higham 2002) and reports the change. ``item_names``
    (or the columns of a data frame) name the items in error messages. Returns a
    :class:`Correlation`.
    """
    data = _make_data(X, corr, cov, n_obs, item_names)
    return _correlate(data, method, missing, smooth, min_eigenvalue, min_pair_observations, threads, max_categories,
                      zero_cells, zero_cell_add, progress, em_tolerance, em_max_iterations)


# ---- factorability ---------------------------------------------------------------------------------

class Factorability(_native.Handle):
    """Is the correlation matrix worth factoring?

    Attributes: ``kmo`` (overall Kaiser-Meyer-Olkin; None when the matrix is not positive
    definite), ``kmo_label`` (Kaiser's 1974 verbal label), ``msa`` (per item), ``bartlett`` (a dict
    with ``chi_square``, ``df``, ``p_value``, ``n_obs``; None without n_obs), ``determinant``,
    ``log_determinant``, ``smc`` (squared multiple correlations) and ``notes``.
    """

    _free = "lode_factorability_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_factorability", pointer)
        self.kmo = _optional(lambda: num(_abi.LODE_FACTORABILITY_KMO))
        self.kmo_label = _optional(lambda: txt(_abi.LODE_FACTORABILITY_KMO_LABEL))
        self.msa = _optional(lambda: mat(_abi.LODE_FACTORABILITY_MSA)[:, 0])
        self.smc = _optional(lambda: mat(_abi.LODE_FACTORABILITY_SMC)[:, 0])
        chi = _optional(lambda: num(_abi.LODE_FACTORABILITY_BARTLETT_CHI_SQUARE))
        self.bartlett = None if chi is None else {
            "chi_square": chi, "df": num(_abi.LODE_FACTORABILITY_BARTLETT_DF),
            "p_value": num(_abi.LODE_FACTORABILITY_BARTLETT_P_VALUE),
            "n_obs": int(num(_abi.LODE_FACTORABILITY_BARTLETT_N_OBS))}
        self.determinant = num(_abi.LODE_FACTORABILITY_DETERMINANT)
        self.log_determinant = num(_abi.LODE_FACTORABILITY_LOG_DETERMINANT)
        self.notes = _lines(txt(_abi.LODE_FACTORABILITY_NOTES))

    def __repr__(self):
        return f"<lode.Factorability kmo={self.kmo}>"


def _optional(get):
    try:
        return get()
    except LodeError:
        return None


def _lines(text):
    return text.split("\n") if text else []


def _correlation_of(X, corr, cov, n_obs, correlation, missing, smooth, item_names):
    if isinstance(X, Correlation):
        return X
    data = _make_data(X, corr, cov, n_obs, item_names)
    return _correlate(data, correlation, missing, smooth, 1e-6, 3)


@accepts_summary
def factorability(X=None, *, corr=None, cov=None, n_obs=None, correlation="pearson", missing="pairwise",
                  smooth=False, item_names=None):
    """Kaiser-Meyer-Olkin (overall and per item), Bartlett's test of sphericity, the determinant and
    the squared multiple correlations of the data's correlation matrix (raw data ``X``, or ``corr``
    / ``cov`` with ``n_obs``; ``X`` may also be a :class:`Correlation`). Returns a
    :class:`Factorability`."""
    c = _correlation_of(X, corr, cov, n_obs, correlation, missing, smooth, item_names)
    ptr = ctypes.c_void_p()
    check(lib.lode_factorability_compute(c.pointer, ctypes.byref(ptr)))
    return Factorability(ptr.value)




# ---- factor count ----------------------------------------------------------------------------------

_SOURCES = {"normal": _abi.LODE_RANDOM_SOURCE_NORMAL, "permutation": _abi.LODE_RANDOM_SOURCE_PERMUTATION}
_THRESHOLDS = {"percentile": _abi.LODE_THRESHOLD_PERCENTILE, "mean": _abi.LODE_THRESHOLD_MEAN}


class FactorCount(_native.Handle):
    """How many factors: every rule side by side.

    Attributes: ``suggested`` (int) and ``reason``; ``counts`` (dict from rule name to the count it
    gives; ``by_rule`` is its former, deprecated name); ``table`` (list of dicts: ``rule``, ``factors``, ``primary``, ``basis``); ``parallel``
    (dict: ``observed_pc``, ``observed_factor``, ``random_pc_mean``, ``random_pc_percentile``,
    ``random_factor_mean``, ``random_factor_percentile``, ``suggested_pc``, ``suggested_factor``,
    ``replicates``, ``percentile``); ``map`` (dict: ``average_squared``, ``average_fourth``,
    ``suggested_squared``, ``suggested_fourth``); ``kaiser``, ``empirical_kaiser``,
    ``ekc_reference``; ``n_obs``; ``notes``.
    """

    _free = "lode_factor_count_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_factor_count", pointer)
        col = lambda key: mat(key)[:, 0]  # noqa: E731
        self.suggested = int(num(_abi.LODE_FACTOR_COUNT_SUGGESTED))
        self.reason = txt(_abi.LODE_FACTOR_COUNT_REASON)
        self.notes = _lines(txt(_abi.LODE_FACTOR_COUNT_NOTES))
        self.table = []
        for line in _lines(txt(_abi.LODE_FACTOR_COUNT_TABLE)):
            rule, count, primary, basis = line.split("\t", 3)
            self.table.append({"rule": rule, "factors": int(count), "primary": primary == "1", "basis": basis})
        self.counts = {row["rule"]: row["factors"] for row in self.table}
        self.parallel = {
            "observed_pc": col(_abi.LODE_FACTOR_COUNT_OBSERVED_PC),
            "observed_factor": col(_abi.LODE_FACTOR_COUNT_OBSERVED_FACTOR),
            "random_pc_mean": col(_abi.LODE_FACTOR_COUNT_RANDOM_PC_MEAN),
            "random_pc_percentile": col(_abi.LODE_FACTOR_COUNT_RANDOM_PC_PERCENTILE),
            "random_factor_mean": col(_abi.LODE_FACTOR_COUNT_RANDOM_FACTOR_MEAN),
            "random_factor_percentile": col(_abi.LODE_FACTOR_COUNT_RANDOM_FACTOR_PERCENTILE),
            "suggested_pc": int(num(_abi.LODE_FACTOR_COUNT_PARALLEL_PC)),
            "suggested_factor": int(num(_abi.LODE_FACTOR_COUNT_PARALLEL_FACTOR)),
            "replicates": int(num(_abi.LODE_FACTOR_COUNT_REPLICATES)),
            "percentile": num(_abi.LODE_FACTOR_COUNT_PERCENTILE)}
        self.map = {"average_squared": col(_abi.LODE_FACTOR_COUNT_MAP_SQUARED),
                    "average_fourth": col(_abi.LODE_FACTOR_COUNT_MAP_FOURTH),
                    "suggested_squared": int(num(_abi.LODE_FACTOR_COUNT_MAP_SQUARED_SUGGESTED)),
                    "suggested_fourth": int(num(_abi.LODE_FACTOR_COUNT_MAP_FOURTH_SUGGESTED))}
        self.kaiser = int(num(_abi.LODE_FACTOR_COUNT_KAISER))
        self.empirical_kaiser = int(num(_abi.LODE_FACTOR_COUNT_EMPIRICAL_KAISER))
        self.ekc_reference = col(_abi.LODE_FACTOR_COUNT_EKC_REFERENCE)
        self.n_obs = int(num(_abi.LODE_FACTOR_COUNT_N_OBS))

    @property
    def by_rule(self):
        """Former name of ``counts`` (deprecated; kept so existing scripts run)."""
        warnings.warn("FactorCount.by_rule is now FactorCount.counts", DeprecationWarning, stacklevel=2)
        return self.counts

    def __repr__(self):
        return f"<lode.FactorCount suggested={self.suggested}>"


def _count_options(replicates, seed, percentile, threshold, source, threads, progress):
    o = _native.options("lode_factor_count_options")
    if replicates is not None:
        _checks.put(o, "replicates", replicates)
    if seed is not None:
        _checks.put(o, "seed", seed)
    _checks.put(o, "percentile", percentile)
    o.threshold = _choice(threshold, _THRESHOLDS, "threshold")
    o.source = _choice(source, _SOURCES, "random data source")
    _checks.put(o, "threads", threads)
    callback = _native.attach_progress(o, progress)
    return o, callback


@accepts_summary
def count_factors(X=None, *, corr=None, cov=None, n_obs=None, replicates=None, seed=None, percentile=95.0,
              threshold="percentile", source="normal", correlation="pearson", missing="pairwise", smooth=False,
              threads=0, progress=None, item_names=None):
    """How many factors to extract: parallel analysis (Horn 1965; ``replicates`` random data sets,
    None = the library's default of 500, ``source`` "normal" or "permutation", compared with the
    ``percentile`` or the mean), Velicer's
    MAP test (squared and fourth power), eigenvalues above one and the empirical Kaiser criterion,
    with a suggested count and its reason. ``seed`` None uses Lode's fixed default seed (results are
    reproducible either way). ``progress(done, total)`` is called during the work; returning False
    cancels (LodeError). Returns a :class:`FactorCount`."""
    c = _correlation_of(X, corr, cov, n_obs, correlation, missing, smooth, item_names)
    o, keep = _count_options(replicates, seed, percentile, threshold, source, threads, progress)
    ptr = ctypes.c_void_p()
    check(lib.lode_factor_count_compute(c.pointer, ctypes.byref(o), ctypes.byref(ptr)))
    del keep
    return FactorCount(ptr.value)


def n_factors(*args, **kwargs):
    """Former name of :func:`count_factors` (deprecated; kept so existing scripts run)."""
    warnings.warn("lode.n_factors is now lode.count_factors", DeprecationWarning, stacklevel=2)
    return count_factors(*args, **kwargs)


@accepts_summary
def parallel_analysis(X=None, *, corr=None, cov=None, n_obs=None, replicates=None, seed=None, percentile=95.0,
                      threshold="percentile", source="normal", **kwargs):
    """Parallel analysis (Horn 1965) alone: a dict with the observed component and factor
    (reduced-matrix) eigenvalues, the random-data means and percentiles by position, and the
    suggested counts ``suggested_pc`` and ``suggested_factor``. Arguments as :func:`count_factors`."""
    return count_factors(X, corr=corr, cov=cov, n_obs=n_obs, replicates=replicates, seed=seed, percentile=percentile,
                     threshold=threshold, source=source, **kwargs).parallel


@accepts_summary
def map_test(X=None, *, corr=None, cov=None, n_obs=None, **kwargs):
    """Velicer's (1976) minimum average partial test and its fourth-power variant (Velicer, Eaton &
    Fava 2000): a dict with ``average_squared`` and ``average_fourth`` (entry m: after removing m
    components) and the suggested counts ``suggested_squared`` and ``suggested_fourth``."""
    kwargs.setdefault("replicates", 1)
    return count_factors(X, corr=corr, cov=cov, n_obs=n_obs, **kwargs).map


# ---- rotation --------------------------------------------------------------------------------------

def _rotation_method(name):
    method = ctypes.c_int()
    check(lib.lode_criterion_from_name(str(name).encode(), ctypes.byref(method)))
    return method.value


def _rotation_options(rotation, normalize, gamma, kappa, epsilon, power, target, random_starts, seed, threads):
    """The rotation option struct and the arrays it points to (kept alive by the caller)."""
    o = _native.options("lode_rotation_options")
    o.method = _rotation_method(rotation)
    o.normalize = 1 if normalize else 0
    _checks.put(o, "gamma", gamma)
    _checks.put(o, "epsilon", epsilon)
    if o.method == 13:  # promax: kappa is its power
        _checks.put(o, "power", power if power is not None else (kappa if kappa is not None else 4.0),
                    "power" if power is not None else "kappa")
    else:
        _checks.put(o, "kappa", kappa if kappa is not None else 0.0)
        if power is not None:
            _checks.put(o, "power", power)
    keep = None
    if target is not None:
        keep, rows, cols, rs, cs = _native.as_strided_matrix(target, "target")
        o.target = _native.data_pointer(keep)
        o.target_rows, o.target_cols, o.target_row_stride, o.target_col_stride = rows, cols, rs, cs
    if random_starts is not None:
        _checks.put(o, "random_starts", random_starts)
    if seed is not None:
        _checks.put(o, "seed", seed)
    _checks.put(o, "threads", threads)
    return o, keep


class Rotation(_native.Handle):
    """A rotated loading matrix.

    Attributes: ``loadings`` (the pattern, items x factors), ``structure``,
    ``factor_correlations`` (identity when orthogonal), ``rotation_matrix`` (T: pattern = A T
    orthogonal, A inv(T)' oblique), ``criterion`` (with ``normalize=True`` the criterion of the
    Kaiser-normalised loadings, the ones minimised), ``converged``, ``iterations``, ``oblique``,
    ``method``, ``convergence`` (a dict: ``converged``, ``iterations``, ``final_change``,
    ``tolerance``, ``max_iterations``), ``ss_loadings`` and ``ss_structure`` (per factor), ``starts`` (a dict: ``starts``,
    ``converged``, ``reached_best``, ``distinct_solutions``, ``criteria``).
    """

    _free = "lode_rotation_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_rotation", pointer)
        self.loadings = mat(_abi.LODE_ROTATION_PATTERN)
        self.structure = mat(_abi.LODE_ROTATION_STRUCTURE)
        self.factor_correlations = mat(_abi.LODE_ROTATION_FACTOR_CORRELATIONS)
        self.rotation_matrix = mat(_abi.LODE_ROTATION_TRANSFORM)
        self.ss_loadings = mat(_abi.LODE_ROTATION_SS_PATTERN)[:, 0]
        self.ss_structure = mat(_abi.LODE_ROTATION_SS_STRUCTURE)[:, 0]
        self.criterion = num(_abi.LODE_ROTATION_CRITERION)
        self.converged = bool(num(_abi.LODE_ROTATION_CONVERGED))
        self.iterations = int(num(_abi.LODE_ROTATION_ITERATIONS))
        self.oblique = bool(num(_abi.LODE_ROTATION_OBLIQUE))
        self.method = txt(_abi.LODE_ROTATION_METHOD_NAME)
        self.convergence = {"converged": self.converged, "iterations": self.iterations,
                            "final_change": num(_abi.LODE_ROTATION_FINAL_CHANGE),
                            "tolerance": num(_abi.LODE_ROTATION_TOLERANCE),
                            "max_iterations": int(num(_abi.LODE_ROTATION_MAX_ITERATIONS))}
        self.starts = {"starts": int(num(_abi.LODE_ROTATION_STARTS)),
                       "converged": int(num(_abi.LODE_ROTATION_STARTS_CONVERGED)),
                       "reached_best": int(num(_abi.LODE_ROTATION_REACHED_BEST)),
                       "distinct_solutions": int(num(_abi.LODE_ROTATION_DISTINCT_SOLUTIONS)),
                       "criteria": mat(_abi.LODE_ROTATION_START_CRITERIA)[:, 0]}

    def __repr__(self):
        return f"<lode.Rotation {self.method} {self.loadings.shape}>"


def rotate(loadings, rotation="varimax", *, normalize=True, gamma=0.0, kappa=None, epsilon=0.01, power=None,
           target=None, random_starts=None, seed=None, threads=1):
    """Rotates a loading matrix (items x factors) the caller already has.

    ``rotation``: "none", "varimax", "quartimax", "equamax", "promax", "oblimin", "quartimin",
    "geomin" (oblique; "geomin_orthogonal" for the orthogonal one), "target" (orthogonal;
    "target_oblique"), "crawford_ferguson" and its oblique version, "varimax_kaiser".
    ``normalize`` is Kaiser row normalisation; ``gamma`` the oblimin parameter; ``kappa`` the
    Crawford-Ferguson kappa, or for promax its power (4 by default; ``power`` says the same);
    ``epsilon`` geomin's constant; ``target`` an items x factors target, NaN for unspecified
    entries; ``random_starts`` extra random starts (None: 10 for geomin and the oblimin family, else
    0) drawn from ``seed``. Returns a :class:`Rotation`."""
    a, rows, cols, rs, cs = _native.as_strided_matrix(loadings, "loadings")
    o, keep = _rotation_options(rotation, normalize, gamma, kappa, epsilon, power, target, random_starts, seed, threads)
    ptr = ctypes.c_void_p()
    check(lib.lode_rotation_compute(_native.data_pointer(a), rows, cols, rs, cs, ctypes.byref(o), ctypes.byref(ptr)))
    del keep
    return Rotation(ptr.value)


# ---- fit -------------------------------------------------------------------------------------------

_METHODS = {"ml": _abi.LODE_EXTRACTION_ML, "paf": _abi.LODE_EXTRACTION_PAF, "minres": _abi.LODE_EXTRACTION_MINRES,
            "pca": _abi.LODE_EXTRACTION_PCA}
_METHOD_NAMES = {v: k for k, v in _METHODS.items()}


class Model(_native.Handle):
    """A fitted factor model.

    Attributes (numpy arrays): ``loadings`` (pattern, items x factors; rotated when a rotation was
    asked for), ``structure``, ``factor_correlations``, ``rotation_matrix``,
    ``unrotated_loadings``, ``uniquenesses``, ``communalities``, ``residuals`` (items x items,
    observed minus implied), ``heywood`` (bool per item), ``ss_loadings``; and ``factors``,
    ``method``, ``rotation``, ``converged``, ``iterations``, ``n_obs``, ``oblique``, ``notes``,
    ``suggested_factors`` (the count used when factors=0), ``convergence`` (a dict:
    ``converged``, ``iterations``, ``final_change``, ``tolerance``, ``max_iterations``). ``statistics`` is a dict with
    ``chi_square``, ``df``, ``p_value``, ``rmsea``, ``rmsea_ci`` (lower, upper), ``tli``, ``bic``,
    ``rmsr``, ``null_chi_square``, ``null_df``; entries that need n_obs are None without it (the
    reason is in ``statistics_unavailable``). For a "paf" or "minres" model the chi-square and
    everything built on it (p_value, rmsea, tli, bic) is the maximum likelihood discrepancy evaluated
    at that solution, not a likelihood-ratio test. ``convergence["final_change"]`` is the criterion
    tested against ``tolerance``: for "ml" and "minres" the largest component of the projected
    gradient (uniquenesses held at their lower bound count as converged there), for "paf" the
    largest change of a communality.
    """

    _free = "lode_model_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_model", pointer)
        self.loadings = mat(_abi.LODE_MODEL_LOADINGS)
        self.structure = mat(_abi.LODE_MODEL_STRUCTURE)
        self.factor_correlations = mat(_abi.LODE_MODEL_FACTOR_CORRELATIONS)
        self.rotation_matrix = mat(_abi.LODE_MODEL_ROTATION_MATRIX)
        self.unrotated_loadings = mat(_abi.LODE_MODEL_UNROTATED_LOADINGS)
        self.uniquenesses = mat(_abi.LODE_MODEL_UNIQUENESSES)[:, 0]
        self.communalities = mat(_abi.LODE_MODEL_COMMUNALITIES)[:, 0]
        self.residuals = mat(_abi.LODE_MODEL_RESIDUALS)
        self.heywood = mat(_abi.LODE_MODEL_HEYWOOD)[:, 0] != 0
        self.ss_loadings = mat(_abi.LODE_MODEL_SS_LOADINGS)[:, 0]
        self.ss_structure = mat(_abi.LODE_MODEL_SS_STRUCTURE)[:, 0]
        self.factors = int(num(_abi.LODE_MODEL_FACTORS))
        self.n_obs = int(num(_abi.LODE_MODEL_N_OBS))
        self.converged = bool(num(_abi.LODE_MODEL_CONVERGED))
        self.iterations = int(num(_abi.LODE_MODEL_ITERATIONS))
        self.objective = num(_abi.LODE_MODEL_OBJECTIVE)
        self.oblique = bool(num(_abi.LODE_MODEL_OBLIQUE))
        self.method = _METHOD_NAMES.get(int(num(_abi.LODE_MODEL_METHOD)), "unknown")
        self.rotation = lib.lode_criterion_name(int(num(_abi.LODE_MODEL_ROTATION_METHOD))).decode()
        self.suggested_factors = int(num(_abi.LODE_MODEL_SUGGESTED_FACTORS))
        self.convergence = {"converged": self.converged, "iterations": self.iterations,
                            "final_change": num(_abi.LODE_MODEL_FINAL_CHANGE),
                            "tolerance": num(_abi.LODE_MODEL_TOLERANCE),
                            "max_iterations": int(num(_abi.LODE_MODEL_MAX_ITERATIONS))}
        self.rotation_starts = int(num(_abi.LODE_MODEL_ROTATION_STARTS))
        self.notes = _lines(txt(_abi.LODE_MODEL_NOTES))
        self.statistics_unavailable = None
        try:
            chi = num(_abi.LODE_MODEL_CHI_SQUARE)
        except LodeError as e:
            chi = None
            self.statistics_unavailable = e.message
        stat = (lambda key: num(key)) if chi is not None else (lambda key: None)
        self.statistics = {
            "chi_square": chi, "df": stat(_abi.LODE_MODEL_DF), "p_value": stat(_abi.LODE_MODEL_P_VALUE),
            "rmsea": stat(_abi.LODE_MODEL_RMSEA),
            "rmsea_ci": None if chi is None else (num(_abi.LODE_MODEL_RMSEA_LOWER), num(_abi.LODE_MODEL_RMSEA_UPPER)),
            "tli": stat(_abi.LODE_MODEL_TLI), "bic": stat(_abi.LODE_MODEL_BIC),
            "rmsr": num(_abi.LODE_MODEL_RMSR), "max_abs_residual": num(_abi.LODE_MODEL_MAX_ABS_RESIDUAL),
            "null_chi_square": stat(_abi.LODE_MODEL_NULL_CHI_SQUARE), "null_df": stat(_abi.LODE_MODEL_NULL_DF)}

    def item_flags(self, **thresholds):
        """The items of this model that need a look; the same as :func:`item_flags` (``model``, then
        the thresholds ``salient``, ``cross_gap``, ``low_communality``, ``heywood_uniqueness``)."""
        return item_flags(self, **thresholds)

    def __repr__(self):
        return f"<lode.Model {self.method} {self.factors} factor(s), {self.rotation}>"


@accepts_summary
def fit(X=None, *, corr=None, cov=None, n_obs=None, factors=0, method="ml", rotation="oblimin", missing="pairwise",
        correlation="pearson", smooth=False, seed=None, max_iterations=1000, tolerance=1e-9, min_uniqueness=0.005,
        interval_level=0.90, replicates=None, progress=None, item_names=None, **rotation_keywords):
    """Fits an exploratory factor model.

    Data: raw ``X`` (rows are respondents, NaN missing; ``missing`` "pairwise", "listwise" or "em",
    ``correlation`` "pearson" or "spearman", ``smooth`` a non-positive-definite matrix), or a
    correlation matrix ``corr`` / covariance matrix ``cov`` with ``n_obs``, or a
    :class:`Correlation`. ``factors``: how many (0, the default = the count parallel analysis suggests: reduced-matrix
    factor eigenvalues against the 95th percentile of ``replicates`` random data sets, None = 500, with
    ``seed``; the rule the cell functions and the report use too). ``method``: "ml" (maximum
    likelihood), "paf" (principal axis), "minres" (minimum residual) or "pca" (components, for
    comparison). With "paf" and "minres" the chi-square, p-value, RMSEA, TLI and BIC in ``statistics``
    are the maximum likelihood discrepancy evaluated at that solution, not a likelihood-ratio test
    (descriptive; the p-value runs small). ``rotation`` (default "oblimin") and the
    ``rotation_keywords`` (normalize, gamma, kappa, epsilon, power, target, random_starts) as in
    :func:`rotate`; ``seed`` seeds the random starts and the factor count. ``progress(done, total)``
    is called during the work (by the factor count when ``factors`` is 0, with its replicates; then
    by the fit, where the extraction counts one unit and each rotation start one); returning False
    cancels (:class:`LodeError`, status "cancelled"). Returns a :class:`Model`; non-convergence and
    Heywood cases are reported in it, not raised. The defaults (maximum likelihood, oblimin, the
    suggested count) are the ones the cells and the report use (README, "Defaults")."""
    c = _correlation_of(X, corr, cov, n_obs, correlation, missing, smooth, item_names)
    o, keep = _fit_options(factors, method, max_iterations, tolerance, min_uniqueness, rotation, seed,
                           rotation_keywords, "fit")
    _checks.put(o, "interval_level", interval_level)
    if o.factors == 0:
        co, callback = _count_options(replicates, seed, 95.0, "percentile", "normal", 0, progress)
        keep += [co, callback]
        o.factor_count = ctypes.pointer(co)
    if progress is not None:
        callback = _native.make_progress(progress)
        keep.append(callback)
        o.progress = callback
    ptr = ctypes.c_void_p()
    check(lib.lode_model_compute(c.pointer, ctypes.byref(o), ctypes.byref(ptr)))
    del keep
    return Model(ptr.value)


def _fit_options(factors, method, max_iterations, tolerance, min_uniqueness, rotation, seed, rotation_keywords,
                 what):
    """lode_model_options for an explicit number of factors and a rotation with its keywords; returns
    the struct and the objects it points to (kept alive by the caller)."""
    if seed is not None:
        _checks.whole(seed, "seed", 0, 2 ** 64 - 1)  # (used only by some paths, checked on all)
    allowed = {"normalize", "gamma", "kappa", "epsilon", "power", "target", "random_starts", "threads"}
    unknown = set(rotation_keywords) - allowed
    if unknown:
        raise ArgumentError(f"{what}() got unexpected keyword(s): {', '.join(sorted(unknown))}")
    o = _native.options("lode_model_options", factors=factors,
                        method=_choice(method, _METHODS, "extraction method"), max_iterations=max_iterations,
                        tolerance=tolerance, min_uniqueness=min_uniqueness)
    keep = []
    if rotation is not None and str(rotation).lower() != "none":
        kw = {"normalize": True, "gamma": 0.0, "kappa": None, "epsilon": 0.01, "power": None, "target": None,
              "random_starts": None, "threads": 1}
        kw.update(rotation_keywords)
        ro, target = _rotation_options(rotation, kw["normalize"], kw["gamma"], kw["kappa"], kw["epsilon"],
                                       kw["power"], kw["target"], kw["random_starts"], seed, kw["threads"])
        keep += [ro, target]
        o.rotation = ctypes.pointer(ro)
    return o, keep


# Scores, reliability, comparison, item flags and the bootstrap live in modules of their own; imported
# last because they build on the helpers above.
from .scales import Alpha, Comparison, Omega, Scores, alpha, congruence, omega, scores  # noqa: E402
from .uncertainty import Bootstrap, ItemFlags, bootstrap, item_flags  # noqa: E402
from .hierarchy import SchmidLeiman, schmid_leiman  # noqa: E402
from .groups import GroupComparison, compare_groups  # noqa: E402
from .replication import (HoldoutCheck, Replication, RestrictedFit, fit_pattern, holdout_check,  # noqa: E402
                          replicate)
