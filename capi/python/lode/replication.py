"""Does the structure hold up? The restricted (confirmatory) factor model, split-sample replication and
the confirmatory check on held-out respondents, re-exported by ``lode``."""

import ctypes

import numpy as np

from . import _abi, _checks, _native
from ._checks import ArgumentError
from ._native import check, lib
from . import _correlation_of, _fit_options, _lines
from .summary import accepts_summary

_CAUTION = ("A structure that replicates in halves of one survey, or fits its held-out respondents, is not an "
            "accident of one sample; it is not evidence that the scales are valid for decisions about people.")


class RestrictedFit(_native.Handle):
    """A restricted factor model fitted by maximum likelihood.

    Attributes (numpy arrays): ``loadings`` (items x factors, 0 where the pattern fixes them),
    ``standard_errors`` (of the loadings; NaN where fixed), ``factor_correlations`` and
    ``factor_correlation_errors`` (factors x factors), ``uniquenesses`` and ``uniqueness_errors``
    (per item; NaN for a uniqueness held at its bound), ``heywood`` (bool per item), ``pattern``.
    ``statistics``: a dict with ``chi_square`` ((N - 1) times the minimised discrepancy), ``df``,
    ``p_value``, ``cfi``, ``tli``, ``rmsea``, ``rmsea_ci`` (lower, upper), ``srmr``, ``bic``,
    ``discrepancy``, ``null_chi_square``, ``null_df``. Also ``converged``, ``iterations``,
    ``convergence`` (a dict), ``n_obs``, ``proper_correlations``, ``notes``. Standard errors come
    from the inverse observed information and treat correlations as covariances (approximate)."""

    _free = "lode_restricted_fit_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_restricted_fit", pointer)
        self.loadings, self.standard_errors = mat(_abi.LODE_RESTRICTED_FIT_LOADINGS), mat(_abi.LODE_RESTRICTED_FIT_LOADINGS_SE)
        self.factor_correlations, self.factor_correlation_errors = mat(_abi.LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS), mat(_abi.LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS_SE)
        self.uniquenesses, self.uniqueness_errors = mat(_abi.LODE_RESTRICTED_FIT_UNIQUENESSES)[:, 0], mat(_abi.LODE_RESTRICTED_FIT_UNIQUENESSES_SE)[:, 0]
        self.heywood = mat(_abi.LODE_RESTRICTED_FIT_HEYWOOD)[:, 0] != 0
        self.pattern = mat(_abi.LODE_RESTRICTED_FIT_PATTERN)
        self.n_obs = int(num(_abi.LODE_RESTRICTED_FIT_N_OBS))
        self.converged = bool(num(_abi.LODE_RESTRICTED_FIT_CONVERGED))
        self.iterations = int(num(_abi.LODE_RESTRICTED_FIT_ITERATIONS))
        self.convergence = {"converged": self.converged, "iterations": self.iterations, "final_change": num(_abi.LODE_RESTRICTED_FIT_FINAL_CHANGE),
                            "tolerance": num(_abi.LODE_RESTRICTED_FIT_TOLERANCE)}
        self.free_parameters = int(num(_abi.LODE_RESTRICTED_FIT_FREE_PARAMETERS))
        self.statistics = {"chi_square": num(_abi.LODE_RESTRICTED_FIT_CHI_SQUARE), "df": num(_abi.LODE_RESTRICTED_FIT_DF), "p_value": num(_abi.LODE_RESTRICTED_FIT_P_VALUE), "cfi": num(_abi.LODE_RESTRICTED_FIT_CFI),
                           "tli": num(_abi.LODE_RESTRICTED_FIT_TLI), "rmsea": num(_abi.LODE_RESTRICTED_FIT_RMSEA), "rmsea_ci": (num(_abi.LODE_RESTRICTED_FIT_RMSEA_LOWER), num(_abi.LODE_RESTRICTED_FIT_RMSEA_UPPER)),
                           "srmr": num(_abi.LODE_RESTRICTED_FIT_SRMR), "bic": num(_abi.LODE_RESTRICTED_FIT_BIC), "discrepancy": num(_abi.LODE_RESTRICTED_FIT_DISCREPANCY),
                           "null_chi_square": num(_abi.LODE_RESTRICTED_FIT_NULL_CHI_SQUARE), "null_df": num(_abi.LODE_RESTRICTED_FIT_NULL_DF)}
        self.proper_correlations = bool(num(_abi.LODE_RESTRICTED_FIT_PROPER_CORRELATIONS))
        self.notes = _lines(txt(_abi.LODE_RESTRICTED_FIT_NOTES))

    def __repr__(self):
        s = self.statistics
        return f"<lode.RestrictedFit {self.loadings.shape}, chi2 {s['chi_square']:.3f} on {s['df']:.0f} df>"


def _restricted_options(max_iterations, tolerance, min_uniqueness, interval_level):
    return _native.options("lode_restricted_fit_options",
                           max_iterations=max_iterations, tolerance=tolerance, min_uniqueness=min_uniqueness,
                           interval_level=interval_level)


@accepts_summary
def fit_pattern(X=None, *, corr=None, cov=None, n_obs=None, pattern, missing="pairwise", correlation="pearson",
                smooth=False, max_iterations=500, tolerance=1e-10, min_uniqueness=0.005, interval_level=0.90,
                item_names=None):
    """Fits the restricted (confirmatory) factor model whose free loadings are the 1s of ``pattern``
    (items x factors of 0 and 1) by maximum likelihood (Joreskog 1969): factor variances 1, factor
    correlations and uniquenesses free. Data as in :func:`fit` (raw ``X``, or ``corr`` / ``cov``
    with ``n_obs``, which the fit statistics need). A pattern with an item on no factor or a factor
    with fewer than two items is refused (:class:`LodeError` naming it). Returns :class:`RestrictedFit`;
    non-convergence and Heywood cases are reported in it."""
    c = _correlation_of(X, corr, cov, n_obs, correlation, missing, smooth, item_names)
    p, rows, cols, rs, cs = _native.as_strided_matrix(_checks.matrix(pattern, "pattern"), "pattern")
    o = _restricted_options(max_iterations, tolerance, min_uniqueness, interval_level)
    ptr = ctypes.c_void_p()
    check(lib.lode_restricted_fit_compute(c.pointer, _native.data_pointer(p), rows, cols, rs, cs, ctypes.byref(o),
                                          ctypes.byref(ptr)))
    return RestrictedFit(ptr.value)


class Replication(_native.Handle):
    """Split-sample replication of a factor solution.

    Per factor (numpy arrays): ``congruence_median`` and ``congruence_p5`` (median and 5th percentile
    of Tucker's congruence between the two halves' matched factors), ``share_fair`` and
    ``share_equal`` (share of splits with that congruence at least 0.85 and 0.95; Lorenzo-Seva & ten
    Berge 2006). Per item: ``item_stability`` (share of splits in which the item's largest loading is
    on the same factor in both halves). ``congruence`` (used splits x factors), ``loadings`` (the
    full-sample pattern). Numbers: ``splits``, ``splits_used``, ``splits_failed`` (reasons in
    ``failures``), ``suggested_full`` (factor count of the full sample by the empirical Kaiser
    criterion), ``share_same_count`` (splits whose halves suggest the same count),
    ``share_full_count`` (both the full sample's). ``notes`` and ``caution``."""

    _free = "lode_replication_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_replication", pointer)
        self.congruence_median, self.congruence_p5, self.share_fair, self.share_equal, self.item_stability = (
            mat(k)[:, 0] for k in (_abi.LODE_REPLICATION_CONGRUENCE_MEDIAN, _abi.LODE_REPLICATION_CONGRUENCE_P5, _abi.LODE_REPLICATION_SHARE_FAIR, _abi.LODE_REPLICATION_SHARE_EQUAL, _abi.LODE_REPLICATION_ITEM_STABILITY))
        self.congruence, self.loadings = mat(_abi.LODE_REPLICATION_CONGRUENCE), mat(_abi.LODE_REPLICATION_LOADINGS)
        self.splits, self.splits_used, self.splits_failed = (int(num(k)) for k in (_abi.LODE_REPLICATION_SPLITS, _abi.LODE_REPLICATION_USED, _abi.LODE_REPLICATION_FAILED))
        self.factors = int(num(_abi.LODE_REPLICATION_FACTORS))
        self.suggested_full = int(num(_abi.LODE_REPLICATION_SUGGESTED_FULL))
        self.share_same_count, self.share_full_count = num(_abi.LODE_REPLICATION_SHARE_SAME_COUNT), num(_abi.LODE_REPLICATION_SHARE_FULL_COUNT)
        self.failures = _lines(txt(_abi.LODE_REPLICATION_FAILURES))
        self.notes = _lines(txt(_abi.LODE_REPLICATION_NOTES))
        self.caution = _CAUTION

    def __repr__(self):
        return f"<lode.Replication {self.splits_used} of {self.splits} splits, {self.factors} factor(s)>"


def _split_analysis(X, factors, what, caller, method, rotation, missing, correlation, smooth, max_iterations,
                    tolerance, min_uniqueness, seed, item_names, rotation_keywords):
    """The correlation handle of raw data ``X`` and the lode_model_options of the analysis a split repeats
    (with the objects they point to, kept alive by the caller)."""
    if X is None:
        given = [k for k in ("corr", "cov") if k in rotation_keywords]
        raise ArgumentError(f"{what} splits the respondents, so it needs their raw data X (rows x items)"
                            + (f"; {given[0]}= cannot be split" if given else ""))
    if factors is None or _checks.whole(factors, "factors", -2 ** 31, 2 ** 31 - 1) < 1:
        raise ArgumentError(f"{what} needs the number of factors (factors >= 1)")
    c = _correlation_of(X, None, None, None, correlation, missing, smooth, item_names)
    o, keep = _fit_options(factors, method, max_iterations, tolerance, min_uniqueness, rotation, seed,
                           rotation_keywords, caller)
    return c, o, keep


@accepts_summary(needs_rows="split-sample replication")
def replicate(X=None, *, splits=100, seed=None, factors=None, method="ml", rotation="oblimin", missing="pairwise",
              correlation="pearson", smooth=False, max_iterations=1000, tolerance=1e-9, min_uniqueness=0.005,
              threads=0, progress=None, item_names=None, **rotation_keywords):
    """Splits the respondents of ``X`` (raw data) at random into two halves ``splits`` times (split i
    from stream i of ``seed``; None: the library's default 1, so results do not depend on
    ``threads``), runs the analysis :func:`fit` would run with the same ``factors`` (at least 1),
    ``method``, ``rotation`` and correlation options in each half, aligns each half's factors to the
    full-sample solution and compares the halves. ``progress(done, total)`` counts splits; returning
    False cancels. Returns :class:`Replication`."""
    c, o, keep = _split_analysis(X, factors, "replication", "replicate", method, rotation, missing, correlation, smooth,
                                 max_iterations, tolerance, min_uniqueness, seed, item_names, rotation_keywords)
    r = _native.options("lode_replication_options", splits=splits, threads=threads)
    if seed is not None:
        _checks.put(r, "seed", seed)
    callback = _native.attach_progress(r, progress)
    ptr = ctypes.c_void_p()
    check(lib.lode_replication_compute(c.pointer, ctypes.byref(o), ctypes.byref(r), ctypes.byref(ptr)))
    del keep, callback
    return Replication(ptr.value)


class HoldoutCheck(_native.Handle):
    """The confirmatory check on held-out respondents.

    ``exploratory_loadings`` and ``exploratory_factor_correlations`` (the analysis of the remaining
    respondents), ``pattern`` (the simple structure taken from it, items x factors of 0/1),
    ``items_fitted`` and ``items_left_out`` (0-based; left out: salient nowhere), ``holdout_rows``
    (0-based rows held out), ``n_explore``, ``n_holdout``, ``share``, ``salient``, ``confirmatory``
    (a :class:`RestrictedFit` of the held-out respondents, over ``items_fitted``), ``notes``,
    ``caution``."""

    _free = "lode_holdout_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_holdout", pointer)
        self.exploratory_loadings, self.exploratory_factor_correlations, self.pattern = mat(_abi.LODE_HOLDOUT_EXPLORATORY_LOADINGS), mat(_abi.LODE_HOLDOUT_EXPLORATORY_FACTOR_CORRELATIONS), mat(_abi.LODE_HOLDOUT_PATTERN)
        self.items_fitted, self.items_left_out, self.holdout_rows = (
            mat(k)[:, 0].astype(np.int64) for k in (_abi.LODE_HOLDOUT_ITEMS_FITTED, _abi.LODE_HOLDOUT_ITEMS_LEFT_OUT, _abi.LODE_HOLDOUT_ROWS))
        self.n_explore, self.n_holdout = int(num(_abi.LODE_HOLDOUT_N_EXPLORE)), int(num(_abi.LODE_HOLDOUT_N_HOLDOUT))
        self.share, self.salient = num(_abi.LODE_HOLDOUT_SHARE), num(_abi.LODE_HOLDOUT_SALIENT)
        self.notes = _lines(txt(_abi.LODE_HOLDOUT_NOTES))
        self.caution = _CAUTION
        ptr = ctypes.c_void_p()
        check(lib.lode_restricted_fit_from_holdout(pointer, ctypes.byref(ptr)))
        self.confirmatory = RestrictedFit(ptr.value)

    def __repr__(self):
        return f"<lode.HoldoutCheck {self.n_holdout} held out, {len(self.items_fitted)} item(s) fitted>"


@accepts_summary(needs_rows="the hold-out check")
def holdout_check(X=None, *, factors=None, share=0.5, seed=None, salient=0.40, method="ml", rotation="oblimin",
                  missing="pairwise", correlation="pearson", smooth=False, max_iterations=1000, tolerance=1e-9,
                  min_uniqueness=0.005, item_names=None, **rotation_keywords):
    """Holds out ``share`` of the respondents of ``X`` at random (stream 0 of ``seed``), runs the
    analysis :func:`fit` would run (``factors`` at least 1, ``method``, ``rotation``) on the rest,
    takes its simple structure (each item on the factor of its largest absolute loading at or above
    ``salient``; items salient nowhere left out and listed) and fits that restricted model by maximum
    likelihood to the held-out respondents. A share too small for either part raises
    :class:`LodeError` naming the workable shares. Returns :class:`HoldoutCheck`."""
    c, o, keep = _split_analysis(X, factors, "the hold-out check", "holdout_check", method, rotation, missing,
                                 correlation, smooth, max_iterations, tolerance, min_uniqueness, seed, item_names,
                                 rotation_keywords)
    h = _native.options("lode_holdout_options", share=share, salient=salient)
    if seed is not None:
        _checks.put(h, "seed", seed)
    ptr = ctypes.c_void_p()
    check(lib.lode_holdout_compute(c.pointer, ctypes.byref(o), ctypes.byref(h), ctypes.byref(ptr)))
    del keep
    return HoldoutCheck(ptr.value)
