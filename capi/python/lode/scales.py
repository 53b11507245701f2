"""Factor scores, alpha, omega and Tucker's congruence, re-exported by ``lode``."""

import ctypes

import numpy as np

from . import _abi, _checks, _native
from ._checks import ArgumentError
from ._native import check, lib
from . import _METHODS, Model, _choice, _correlation_of, _lines, _make_data
from .summary import accepts_summary

# ---- scores, reliability, comparison ----------------------------------------------------------------

_SCORE_METHODS = {"regression": _abi.LODE_ESTIMATOR_REGRESSION, "bartlett": _abi.LODE_ESTIMATOR_BARTLETT,
                  "correlation_preserving": _abi.LODE_ESTIMATOR_CORRELATION_PRESERVING}
_FORMER_SCORE_METHODS = {"tenberge": "correlation_preserving"}  # former words, still read


def _current_score_method(method):
    return _FORMER_SCORE_METHODS.get(method, method) if isinstance(method, str) else method
_SCORE_MISSING = {"from_answered": _abi.LODE_GAPS_FROM_ANSWERED, "leave_missing": _abi.LODE_GAPS_LEAVE_MISSING}


class Scores(_native.Handle):
    """Factor scores of respondents.

    Attributes: ``values`` (rows x factors; NaN where a row is left missing), ``weights`` (items x
    factors), ``determinacy`` and ``validity`` (per factor), ``low_determinacy`` (bool per factor),
    ``score_correlations``, ``rows_total``, ``rows_complete``, ``rows_partial``, ``rows_missing``,
    ``notes`` and ``cautions`` (factor scores are estimates; an instrument needs validation before
    scores are used to select, rate or diagnose people, and local law and professional testing
    standards govern such use). ``numpy.asarray(scores)`` gives ``values``.
    """

    _free = "lode_scores_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_scores", pointer)
        self.values = mat(_abi.LODE_SCORES_VALUES)
        self.weights = mat(_abi.LODE_SCORES_WEIGHTS)
        self.determinacy = mat(_abi.LODE_SCORES_DETERMINACY)[:, 0]
        self.validity = mat(_abi.LODE_SCORES_VALIDITY)[:, 0]
        self.score_correlations = mat(_abi.LODE_SCORES_CORRELATIONS)
        self.low_determinacy = mat(_abi.LODE_SCORES_LOW_DETERMINACY)[:, 0] != 0
        self.rows_total, self.rows_complete, self.rows_partial, self.rows_missing = (
            int(num(k)) for k in (_abi.LODE_SCORES_ROWS_TOTAL,
                _abi.LODE_SCORES_ROWS_COMPLETE, _abi.LODE_SCORES_ROWS_PARTIAL, _abi.LODE_SCORES_ROWS_MISSING))
        self.notes = _lines(txt(_abi.LODE_SCORES_NOTES))
        self.cautions = txt(_abi.LODE_SCORES_CAUTIONS)

    def __array__(self, dtype=None, copy=None):
        return self.values if dtype is None else self.values.astype(dtype)

    def __repr__(self):
        return f"<lode.Scores {self.values.shape}>"


@accepts_summary(needs_rows="scores")
def scores(X, model, method="regression", *, missing="from_answered", min_answered_share=0.5, low_determinacy=0.80):
    """Factor scores of the respondents in ``X`` (rows; the model's items in its order; NaN missing)
    on the factors of ``model`` (a :class:`Model` from :func:`fit`). ``X`` None scores the data the
    model was fitted to. ``method``: "regression" (Thurstone), "bartlett" or "correlation_preserving"
    (ten Berge et al. 1999; the former word "tenberge" is still read). ``missing``: "from_answered"
    (weights from the answered items, when at least ``min_answered_share`` were answered) or
    "leave_missing". Returns :class:`Scores`; read its
    ``cautions`` before using scores to make decisions about people."""
    o = _native.options("lode_scores_options",
                        method=_choice(_current_score_method(method), _SCORE_METHODS, "score method"),
                        missing=_choice(missing, _SCORE_MISSING, "missing-item rule"),
                        min_answered_share=min_answered_share, low_determinacy=low_determinacy)
    _checks.instance(model, Model, "model", "a fitted model (lode.fit)")
    data = None if X is None else _make_data(X)
    ptr = ctypes.c_void_p()
    check(lib.lode_scores_compute(model.pointer, None if data is None else data.pointer, ctypes.byref(o), ctypes.byref(ptr)))
    return Scores(ptr.value)


class Alpha(_native.Handle):
    """Cronbach's alpha of one scale: ``alpha`` (raw), ``alpha_standardized``,
    ``mean_inter_item_correlation``, per item ``alpha_if_deleted``,
    ``alpha_standardized_if_deleted``, ``item_total_correlation`` (corrected), ``item_means``,
    ``item_sds``; ``rows_total``, ``rows_used`` (complete rows), ``items``, ``notes``."""

    _free = "lode_reliability_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_reliability", pointer)
        col = lambda key: mat(key)[:, 0]  # noqa: E731
        self.alpha = num(_abi.LODE_RELIABILITY_ALPHA)
        self.alpha_standardized = num(_abi.LODE_RELIABILITY_ALPHA_STANDARDIZED)
        self.mean_inter_item_correlation = num(_abi.LODE_RELIABILITY_ALPHA_MEAN_INTER_ITEM)
        self.rows_total = int(num(_abi.LODE_RELIABILITY_ALPHA_ROWS_TOTAL))
        self.rows_used = int(num(_abi.LODE_RELIABILITY_ALPHA_ROWS_USED))
        self.items = int(num(_abi.LODE_RELIABILITY_ALPHA_ITEMS))
        self.alpha_if_deleted = col(_abi.LODE_RELIABILITY_ALPHA_IF_DELETED)
        self.alpha_standardized_if_deleted = col(_abi.LODE_RELIABILITY_ALPHA_STANDARDIZED_IF_DELETED)
        self.item_total_correlation = col(_abi.LODE_RELIABILITY_ALPHA_ITEM_TOTAL)
        self.item_means = col(_abi.LODE_RELIABILITY_ALPHA_ITEM_MEANS)
        self.item_sds = col(_abi.LODE_RELIABILITY_ALPHA_ITEM_SDS)
        self.notes = _lines(txt(_abi.LODE_RELIABILITY_NOTES))

    def __repr__(self):
        return f"<lode.Alpha {self.alpha:.3f}>"


@accepts_summary(needs_rows="alpha")
def alpha(X, *, item_names=None):
    """Cronbach's (1951) alpha of the scale whose items are the columns of ``X`` (already
    reverse-scored where needed; rows with a missing item are left out). Returns :class:`Alpha`."""
    data = _make_data(X, item_names=item_names)
    ptr = ctypes.c_void_p()
    check(lib.lode_reliability_compute_alpha(data.pointer, ctypes.byref(ptr)))
    return Alpha(ptr.value)


class Omega(_native.Handle):
    """McDonald's (1999) omega per factor's scale (the sum of the items S assigned to the factor),
    as shares of the model-implied variance of that sum, ``scale_variance`` = 1' Sigma_SS 1 with
    Sigma = Lambda Phi Lambda' + Psi: ``omega`` is omega total, 1' (Lambda Phi Lambda')_SS 1 over it
    (every common factor counts); ``factor_share`` is (sum of the items' loadings on the scale's
    factor)^2 over it. Both are per factor, NaN for a factor without items, and equal for one factor.
    Also ``assignment`` (each item's factor, -1 = none), ``sum_loadings``, ``sum_uniquenesses``,
    ``notes`` (the assignment rule and caveats). For a single scale also ``loadings`` and
    ``uniquenesses`` of its one-factor fit and ``converged`` (None otherwise)."""

    _free = "lode_reliability_free"

    def __init__(self, pointer, single=False):
        super().__init__(pointer)
        mat, num, txt = _native.readers("lode_reliability", pointer)
        col = lambda key: mat(key)[:, 0]  # noqa: E731
        self.omega = col(_abi.LODE_RELIABILITY_OMEGA)
        self.assignment = col(_abi.LODE_RELIABILITY_OMEGA_ASSIGNMENT).astype(np.int64)
        self.sum_loadings = col(_abi.LODE_RELIABILITY_OMEGA_SUM_LOADINGS)
        self.sum_uniquenesses = col(_abi.LODE_RELIABILITY_OMEGA_SUM_UNIQUENESSES)
        self.factor_share = col(_abi.LODE_RELIABILITY_OMEGA_FACTOR_SHARE)
        self.scale_variance = col(_abi.LODE_RELIABILITY_OMEGA_SCALE_VARIANCE)
        self.loadings = col(_abi.LODE_RELIABILITY_OMEGA_LOADINGS) if single else None
        self.uniquenesses = col(_abi.LODE_RELIABILITY_OMEGA_UNIQUENESSES) if single else None
        self.converged = bool(num(_abi.LODE_RELIABILITY_OMEGA_CONVERGED)) if single else None
        self.notes = _lines(txt(_abi.LODE_RELIABILITY_NOTES))

    def __repr__(self):
        return f"<lode.Omega {np.round(self.omega, 3)}>"


@accepts_summary
def omega(model=None, *, X=None, corr=None, n_obs=None, assignment=None, method="ml", missing="pairwise",
          correlation="pearson", max_iterations=1000, tolerance=1e-9, min_uniqueness=0.005, item_names=None):
    """McDonald's (1999) omega total (and, per factor, the factor's share; see :class:`Omega`).

    With ``model`` (a :class:`Model` from :func:`fit`): omega for the scale of each factor, items
    assigned by ``assignment`` (each item's 0-based factor, -1 = none) or, when None, to the factor
    of their largest absolute loading. Without a model: omega of a single scale whose items are the
    columns of ``X`` (or whose correlation matrix is ``corr``), from a one-factor fit (``method``
    "ml", "paf", "minres"; ``missing`` and ``correlation`` as in :func:`fit`); the fit's convergence
    is in ``converged`` and the notes. Returns :class:`Omega`."""
    ptr = ctypes.c_void_p()
    if model is None:
        if X is None and corr is None:
            raise ArgumentError("give a fitted model, or the scale's data X or correlation matrix corr")
        if assignment is not None:
            raise ArgumentError("assignment applies to a model's factors; a single scale has one")
        c = _correlation_of(X, corr, None, n_obs, correlation, missing, False, item_names)
        o = _native.options("lode_model_options",
                            method=_choice(method, _METHODS, "extraction method"), max_iterations=max_iterations,
                            tolerance=tolerance, min_uniqueness=min_uniqueness)
        check(lib.lode_reliability_compute_scale_omega(c.pointer, ctypes.byref(o), ctypes.byref(ptr)))
        return Omega(ptr.value, single=True)
    _checks.instance(model, Model, "model", "a fitted model (lode.fit)")
    if assignment is None:
        check(lib.lode_reliability_compute_omega(model.pointer, None, 0, ctypes.byref(ptr)))
    else:
        a = np.array([_checks.whole(v, "assignment") for v in np.ravel(_checks.matrix(assignment, "assignment"))],
                     dtype=np.int64)
        check(lib.lode_reliability_compute_omega(model.pointer, a.ctypes.data_as(_native.P_int64), a.size, ctypes.byref(ptr)))
    return Omega(ptr.value)


class Comparison(_native.Handle):
    """Two solutions compared: ``congruence`` (Tucker's coefficients, factors of a by factors of b,
    before matching), ``order`` (the factor of b matched to each factor of a), ``signs``,
    ``matched_congruence``, ``aligned`` (b reordered and reflected), ``notes``."""

    _free = "lode_comparison_free"

    def __init__(self, pointer):
        super().__init__(pointer)
        mat = lambda key: _native.get_matrix(lib.lode_comparison_matrix, pointer, key)  # noqa: E731
        self.congruence = mat(_abi.LODE_COMPARISON_CONGRUENCE)
        self.order = mat(_abi.LODE_COMPARISON_ORDER)[:, 0].astype(np.int64)
        self.signs = mat(_abi.LODE_COMPARISON_SIGNS)[:, 0]
        self.matched_congruence = mat(_abi.LODE_COMPARISON_MATCHED_CONGRUENCE)[:, 0]
        self.aligned = mat(_abi.LODE_COMPARISON_ALIGNED)
        self.notes = _lines(_native.get_text(lib.lode_comparison_text, pointer, _abi.LODE_COMPARISON_NOTES))


def congruence(a, b):
    """Tucker's congruence between the factors of loading matrices ``a`` and ``b`` (same items and
    number of factors) after the best one-to-one matching with sign flips. Returns
    :class:`Comparison`."""
    ma, rows, cols, ars, acs = _native.as_strided_matrix(a, "a")
    mb, rows_b, cols_b, brs, bcs = _native.as_strided_matrix(b, "b")
    if (rows, cols) != (rows_b, cols_b):
        raise ArgumentError(f"a is {rows} x {cols} but b is {rows_b} x {cols_b}; they must have the same shape")
    ptr = ctypes.c_void_p()
    check(lib.lode_comparison_compute(_native.data_pointer(ma), _native.data_pointer(mb), rows, cols, ars, acs, brs, bcs,
                                    ctypes.byref(ptr)))
    return Comparison(ptr.value)
