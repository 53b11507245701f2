"""LODE.REASON: the reason of a failing Lode formula, read from the sheet. A typo in an option, too many
factors and a constant item each show as Err:502 in the failing cell; LODE.REASON with the function's
name and the same arguments gives each its own message, the one the C library raised (compared with the
Python binding's LodeError for the same data where the C library decides)."""

import numpy as np
import pytest

import lode

ERR_INVALID_ARGUMENT = 502


@pytest.fixture(scope="module")
def answers(book):
    rng = np.random.default_rng(20261203)  # seeded inputs for error paths only
    f = rng.normal(size=(200, 2))
    x = np.hstack([f[:, [0]] * [0.8, 0.75, 0.7], f[:, [1]] * [0.8, 0.7, 0.75]]) + rng.normal(size=(200, 6)) * 0.55
    constant = x.copy()
    constant[:, 2] = 4.0
    return x, book.put(x), constant, book.put(constant)


def _both(book, failing, reason):
    return book.value(failing), book.value(reason)


def test_a_typo_in_an_option(book, answers):
    _, rng, _, _ = answers
    shown, why = _both(book, f'=LODE.LOADINGS({rng};2;"minress")', f'=LODE.REASON("LODE.LOADINGS";{rng};2;"minress")')
    assert shown == ("error", ERR_INVALID_ARGUMENT)
    assert why == "Err:502: 'method' must be one of \"ml\", \"paf\", \"minres\"", why


def test_too_many_factors(book, answers):
    x, rng, _, _ = answers
    shown, why = _both(book, f"=LODE.LOADINGS({rng};5)", f'=LODE.REASON("loadings";{rng};5)')
    assert shown == ("error", ERR_INVALID_ARGUMENT)
    with pytest.raises(lode.LodeError) as e:  # the C library refuses the same request
        lode.fit(x, factors=5)
    assert why.startswith("Err:502: ") and e.value.message in why, (why, e.value.message)


def test_a_constant_item(book, answers):
    _, _, constant, crng = answers
    shown, why = _both(book, f"=LODE.FACTORCOUNT({crng})", f'=LODE.REASON("LODE.FACTORCOUNT";{crng})')
    assert shown == ("error", ERR_INVALID_ARGUMENT)
    with pytest.raises(lode.LodeError) as e:
        lode.correlation(constant)
    assert "is constant" in why and why.startswith("Err:502: "), why
    assert "is constant" in e.value.message


def test_a_formula_that_computes_and_an_unknown_name(book, answers):
    _, rng, _, _ = answers
    assert book.value(f'=LODE.REASON("LODE.KMO";{rng})') == "no failure: LODE.KMO computes with these arguments"
    assert book.value(f'=LODE.REASON("LODE.NOSUCH";{rng})') == "Err:502: 'function': Lode has no function LODE.NOSUCH"
    # recalculation: the reason follows the arguments (a corrected option computes)
    assert book.value(f'=LODE.REASON("LODE.LOADINGS";{rng};2;"minres")').startswith("no failure")
