"""The cells on the structure behind a fit, in a real LibreOffice: a general factor (LODE.GENERAL,
LODE.GENERALOMEGA) and the comparison across groups (LODE.GROUPMATCH, LODE.GROUPSKIPPED,
LODE.GROUPSHIFTS), checked against the C library's Python binding on the same data, and bad input
shown as a readable error.

Data: R's 'datasets' package: USJudgeRatings (12 lawyers' ratings of 43 judges; 3 oblique factors)
and iris (Anderson 1935, Fisher 1936; 4 measurements of 150 flowers, 50 per species), whose species
name the groups.
"""

import numpy as np
import pytest

import lode
from refs import r_dataset, run_r

TOL = 1e-9  # the cells hold the C library's doubles; only the transfer through Calc is in between
ERR_INVALID_ARGUMENT = 502
SPECIES = ["setosa", "versicolor", "virginica"]


@pytest.fixture(scope="module")
def judges():
    return r_dataset("USJudgeRatings")


@pytest.fixture(scope="module")
def iris():
    r = run_r('emit("x", as.matrix(iris[, 1:4])); emit("s", as.numeric(iris$Species))')
    labels = [SPECIES[int(c) - 1] for c in r["s"][:, 0]]
    return ["Sepal.Length", "Sepal.Width", "Petal.Length", "Petal.Width"], r["x"], labels


def test_general_factor_cells_match_python(book, judges):
    names, x = judges
    rng = book.put(x, names)
    p = x.shape[1]
    sl = lode.schmid_leiman(lode.fit(x, factors=3))
    cells = book.numbers(f"=LODE.GENERAL({rng};3)", p, 4)
    assert np.max(np.abs(cells[:, 0] - sl.general)) < TOL
    assert np.max(np.abs(cells[:, 1:] - sl.group)) < TOL
    table = book.array(f"=LODE.GENERALOMEGA({rng};3)", 9, 2)
    values = {label: value for label, value in table}
    assert abs(values["omega total"] - sl.omega_total) < TOL
    assert abs(values["omega hierarchical"] - sl.omega_hierarchical) < TOL
    assert abs(values["general factor's share of common variance (ECV)"] - sl.ecv) < TOL
    for f in range(3):
        got = values[f"factor {f + 1}: omega subscale"]
        want = sl.omega_subscales[f]
        assert (got == "no items" and np.isnan(want)) or abs(got - want) < TOL, (f, got, want)
        got = values[f"factor {f + 1}: omega total of its subscale"]
        want = sl.subscale_omega_total[f]
        assert (got == "no items" and np.isnan(want)) or abs(got - want) < TOL, (f, got, want)


def test_general_factor_refuses_orthogonal_and_two_factors(book, judges):
    names, x = judges
    rng = book.put(x, names)
    for formula in [f'=LODE.GENERAL({rng};3;;"varimax")', f"=LODE.GENERAL({rng};2)",
                    f'=LODE.GENERALOMEGA({rng};3;;"varimax")', f"=LODE.GENERALOMEGA({rng};2)"]:
        assert book.value(formula) == ("error", ERR_INVALID_ARGUMENT), formula
    book.still_answers()


def test_group_cells_match_python(book, iris):
    names, x, labels = iris
    rng = book.put(x, names)
    groups = book.put_rows([["species"]] + [[s] for s in labels])  # with a heading, as the data have
    gc = lode.compare_groups(x, labels, factors=1, min_group=20)
    match = book.array(f"=LODE.GROUPMATCH({rng};{groups};1;;;20)", 3, 3)
    assert [row[0] for row in match] == gc.groups == SPECIES
    assert [row[1] for row in match] == [50.0, 50.0, 50.0]
    assert np.max(np.abs(np.array([row[2:] for row in match]) - gc.congruence)) < TOL
    assert book.value(f"=LODE.GROUPSKIPPED({rng};{groups};1;;;20)").startswith("none")
    n = len(gc.item_differences)
    shifts = book.array(f"=LODE.GROUPSHIFTS({rng};{groups};1;;;20)", max(n, 1), 5)
    if n == 0:
        assert shifts[0][0].startswith("none")
    for row, d in zip(shifts, gc.item_differences):
        assert row[0] == d["group"] and row[1] == names[d["item"]] and row[2] == d["factor"] + 1
        assert abs(row[3] - d["group_loading"]) < TOL and abs(row[4] - d["pooled_loading"]) < TOL
    # numbers as labels, without a heading: the same comparison, labelled by the numbers
    codes = book.put_rows([[float(SPECIES.index(s) + 1)] for s in labels])
    numeric = book.array(f"=LODE.GROUPMATCH({rng};{codes};1;;;20)", 3, 3)
    assert [row[0] for row in numeric] == [1.0, 2.0, 3.0]
    assert np.max(np.abs(np.array([row[2:] for row in numeric]) - gc.congruence)) < TOL


def test_group_cells_bad_input_is_a_readable_error(book, iris):
    names, x, labels = iris
    rng = book.put(x, names)
    short = book.put_rows([[s] for s in labels[:100]])
    two_columns = book.put_rows([[s, s] for s in labels])
    gaps = book.put_rows([[s if i != 7 else None] for i, s in enumerate(labels)] + [["end"]])
    groups = book.put_rows([[s] for s in labels])
    for formula in [f"=LODE.GROUPMATCH({rng};{short};1)",  # a grouping column of the wrong length
                    f"=LODE.GROUPMATCH({rng};{two_columns};1)",
                    f"=LODE.GROUPMATCH({rng};{gaps};1;;;20)",  # a respondent without a label
                    f"=LODE.GROUPMATCH({rng};{groups};1;;;51)",  # every group too small
                    f"=LODE.GROUPSKIPPED({rng};{groups};1)",  # the default 100: every group too small
                    f"=LODE.GROUPSHIFTS({rng};{groups};1;;;20;5)"]:  # a threshold outside (0, 2)
        assert book.value(formula) == ("error", ERR_INVALID_ARGUMENT), formula
    book.still_answers()
