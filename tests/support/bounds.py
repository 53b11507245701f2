"""Tolerances for reference checks from rounding-error bounds, the Python twin of bounds.hpp.

A reference library (numpy, scipy, R) may sum in any order and through any BLAS (Debian's reference
BLAS on a fresh machine, OpenBLAS after ./lode bench), so a check must hold for all of them. Higham,
Accuracy and Stability of Numerical Algorithms (2nd ed., 2002), Lemma 3.1: a sum of n products in
floating point, in any order, is within gamma_n = n u / (1 - n u) of the exact sum, relative to
sum |x_i y_i|; u = 2**-53."""

UNIT_ROUNDOFF = 2.0 ** -53


def gamma_n(n):
    nu = n * UNIT_ROUNDOFF
    return nu / (1.0 - nu)


def two_sided_sum_bound(n):
    """Largest gap between two computations of a sum of n products, relative to sum |x_i y_i|."""
    return 2.0 * gamma_n(n)


def correlation_gap_bound(n):
    """Largest gap between two computations of a correlation from n rows (see bounds.hpp)."""
    return 2.0 * two_sided_sum_bound(n) + 8.0 * UNIT_ROUNDOFF


def eigenvalue_gap_bound(p, norm):
    """Two backward-stable symmetric eigensolvers of order p (Golub & Van Loan 2013, 8.3-8.4; c(p) = p^2)."""
    return 2.0 * p * p * UNIT_ROUNDOFF * norm
