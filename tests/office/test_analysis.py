"""The analysis functions (factorability, factor count, extraction, rotation, fit) entered as
formulas in a real LibreOffice; cells checked against the C library on the same data (its Python
binding, capi/python/lode) and against outside references run live, named beside each check:
R's base stats (factanal, varimax, promax; R Core Team) and numpy/scipy from the published
definitions.

Data: R's datasets::Harman74.cor (Harman 1976: 24 psychological tests, n = 145), given to the cells
as a correlation matrix with n_obs, and datasets::attitude (30 x 7 raw responses)."""

import numpy as np
import pytest
import scipy.stats

import lode  # the C library through its Python binding
from refs import r_dataset, run_r

HARMAN_N = 145
K = 4


def _need(office_functions, *names):
    missing = [n for n in names if n not in office_functions]
    if missing:
        pytest.skip(f"{', '.join(missing)} not in this build (the C ABI lacks the computation)")


@pytest.fixture(scope="module")
def functions(office):
    fd = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
    return {dict((p.Name, p.Value) for p in fd.getByIndex(i))["Name"] for i in range(fd.getCount())}


@pytest.fixture(scope="module")
def harman(book):
    r = run_r('emit("R", Harman74.cor$cov)')["R"]
    return r, book.put(r)


@pytest.fixture(scope="module")
def attitude(book):
    names, x = r_dataset("attitude")
    return x, book.put(x, names)


def match_columns(actual, expected):
    """Permutes and reflects the columns of `actual` to best match `expected` (factor solutions are
    unique only up to column order and sign); returns the matched copy and the permutation."""
    a = np.asarray(actual, dtype=float)
    e = np.asarray(expected, dtype=float)
    k = a.shape[1]
    used, perm, out = set(), [], np.zeros_like(a)
    for j in range(k):
        best = max((i for i in range(k) if i not in used),
                   key=lambda i: abs(np.dot(a[:, i], e[:, j])) / (np.linalg.norm(a[:, i]) * np.linalg.norm(e[:, j])))
        used.add(best)
        perm.append(best)
        out[:, j] = a[:, best] * (1 if np.dot(a[:, best], e[:, j]) >= 0 else -1)
    return out, perm


# --- factorability ------------------------------------------------------------------------------


def _kmo_reference(r):
    # Kaiser (1970), Kaiser & Rice (1974): anti-image correlations from Q = R^-1 (numpy)
    q = np.linalg.inv(r)
    a = -q / np.sqrt(np.outer(np.diag(q), np.diag(q)))
    off = ~np.eye(r.shape[0], dtype=bool)
    r2, a2 = np.where(off, r ** 2, 0), np.where(off, a ** 2, 0)
    return r2.sum() / (r2.sum() + a2.sum()), r2.sum(axis=1) / (r2.sum(axis=1) + a2.sum(axis=1))


def test_kmo_and_msa(book, functions, harman, attitude):
    _need(functions, "LODE.KMO", "LODE.MSA")
    r, rng = harman
    kmo = book.value(f"=LODE.KMO({rng})")
    msa = book.numbers(f"=LODE.MSA({rng})", r.shape[0], 1)[:, 0]
    ref_kmo, ref_msa = _kmo_reference(r)
    assert abs(kmo - ref_kmo) < 1e-12
    assert np.max(np.abs(msa - ref_msa)) < 1e-12
    x, rng_x = attitude
    f = lode.factorability(x)
    assert abs(book.value(f"=LODE.KMO({rng_x})") - f.kmo) < 1e-12  # the C library
    assert np.max(np.abs(book.numbers(f"=LODE.MSA({rng_x})", x.shape[1], 1)[:, 0] - f.msa)) < 1e-12


def test_sphericity(book, functions, harman, attitude):
    _need(functions, "LODE.SPHERICITY")
    r, rng = harman
    cells = book.numbers(f"=LODE.SPHERICITY({rng};{HARMAN_N})", 1, 3)[0]
    p = r.shape[0]
    # Bartlett (1950): chi2 = -(n - 1 - (2p + 5)/6) ln|R|, df = p(p-1)/2; p-value from scipy.stats.chi2
    chi2 = -(HARMAN_N - 1 - (2 * p + 5) / 6) * np.linalg.slogdet(r)[1]
    df = p * (p - 1) / 2
    assert abs(cells[0] - chi2) < 1e-8 * chi2
    assert cells[1] == df
    assert abs(cells[2] - scipy.stats.chi2.sf(chi2, df)) < 1e-12
    # a correlation matrix without n_obs cannot be tested: Err:502
    assert book.value(f"=LODE.SPHERICITY({rng})") == ("error", 502)
    x, rng_x = attitude
    cells = book.numbers(f"=LODE.SPHERICITY({rng_x})", 1, 3)[0]
    b = lode.factorability(x).bartlett
    assert abs(cells[0] - b["chi_square"]) < 1e-9 and cells[1] == b["df"]


# --- factor count ---------------------------------------------------------------------------------


def test_parallel(book, functions, attitude):
    _need(functions, "LODE.PARALLEL")
    x, rng = attitude
    r = np.corrcoef(x, rowvar=False)
    p = r.shape[0]
    cells = book.numbers(f"=LODE.PARALLEL({rng};200;95;7)", p, 3)
    # observed column: numpy.linalg.eigvalsh, largest first
    assert np.max(np.abs(cells[:, 0] - np.sort(np.linalg.eigvalsh(r))[::-1])) < 1e-10
    # random-data columns: the C library with the same replicates, percentile and seed
    pa = lode.parallel_analysis(x, replicates=200, percentile=95, seed=7)
    assert np.max(np.abs(cells[:, 1] - pa["random_pc_mean"])) < 1e-10
    assert np.max(np.abs(cells[:, 2] - pa["random_pc_percentile"])) < 1e-10
    assert np.all(cells[:, 2] >= cells[:, 1] - 1e-12)  # a 95th percentile lies above the mean
    again = book.numbers(f"=LODE.PARALLEL({rng};200;95;7)", p, 3)
    assert np.array_equal(again, cells)  # same seed, same cells


def test_factorcount(book, functions, attitude, harman):
    _need(functions, "LODE.FACTORCOUNT", "LODE.NFACTORS")
    # a correlation matrix carries no sample size: nothing can be simulated or tested (Err:502)
    assert book.value(f"=LODE.FACTORCOUNT({harman[1]})") == ("error", 502)
    x, rng = attitude
    r = np.corrcoef(x, rowvar=False)
    eig = np.sort(np.linalg.eigvalsh(r))[::-1]
    # Kaiser's rule: eigenvalues above one (numpy)
    assert book.value(f'=LODE.FACTORCOUNT({rng};"kaiser")') == float(np.sum(eig > 1))
    nf = lode.count_factors(x, replicates=500, seed=3)  # the C library with the cells' replicates and seed
    # "parallel" is the one count rule of every surface: the suggested count (reduced-matrix eigenvalues)
    assert nf.suggested == nf.parallel["suggested_factor"]
    expected = {"parallel": nf.suggested, "map": nf.map["suggested_squared"], "kaiser": nf.kaiser,
                "ekc": nf.empirical_kaiser}
    for rule, count in expected.items():
        assert book.value(f'=LODE.FACTORCOUNT({rng};"{rule}";3)') == float(count), rule
        # the former name still computes the same, so saved workbooks keep working
        assert book.value(f'=LODE.NFACTORS({rng};"{rule}";3)') == float(count), rule


# --- extraction, rotation, fit ----------------------------------------------------------------------


@pytest.fixture(scope="module")
def factanal_harman():
    # R stats::factanal (maximum likelihood) on Harman74.cor, 4 factors, n = 145
    return run_r(f"""
      f0 <- factanal(covmat = Harman74.cor, factors = {K}, rotation = "none")
      fv <- factanal(covmat = Harman74.cor, factors = {K}, rotation = "varimax")
      fp <- factanal(covmat = Harman74.cor, factors = {K}, rotation = "promax")
      L <- unclass(f0$loadings)
      emit("none", L); emit("u", f0$uniquenesses); emit("varimax", unclass(fv$loadings))
      emit("promax", unclass(fp$loadings)); emit("promax_phi", solve(t(fp$rotmat) %*% fp$rotmat))
      emit("stat", c(f0$STATISTIC, f0$dof, f0$PVAL))
      emit("resid", Harman74.cor$cov - (L %*% t(L) + diag(f0$uniquenesses)))
    """)


def test_loadings_ml_none_and_varimax_match_factanal(book, functions, harman, factanal_harman):
    _need(functions, "LODE.LOADINGS", "LODE.UNIQUENESS", "LODE.COMMUNALITY")
    r, rng = harman
    p = r.shape[0]
    ref = factanal_harman
    none = book.numbers(f'=LODE.LOADINGS({rng};{K};"ml";"none";{HARMAN_N})', p, K)
    matched, _ = match_columns(none, ref["none"])
    assert np.max(np.abs(matched - ref["none"])) < 2e-3  # factanal's optimiser stops near 1e-4
    uniq = book.numbers(f'=LODE.UNIQUENESS({rng};{K};"ml";"none";{HARMAN_N})', p, 1)[:, 0]
    assert np.max(np.abs(uniq - ref["u"][:, 0])) < 2e-3
    comm = book.numbers(f'=LODE.COMMUNALITY({rng};{K};"ml";"none";{HARMAN_N})', p, 1)[:, 0]
    assert np.max(np.abs(comm + uniq - 1)) < 1e-9
    vm = book.numbers(f'=LODE.LOADINGS({rng};{K};"ml";"varimax";{HARMAN_N})', p, K)
    matched, _ = match_columns(vm, ref["varimax"])
    assert np.max(np.abs(matched - ref["varimax"])) < 5e-3  # stats::varimax stops at eps = 1e-5
    # the C library on the same matrix and options
    m = lode.fit(corr=r, n_obs=HARMAN_N, factors=K, method="ml", rotation="varimax")
    assert np.max(np.abs(vm - m.loadings)) < 1e-9
    assert np.max(np.abs(uniq - lode.fit(corr=r, n_obs=HARMAN_N, factors=K, method="ml",
                                         rotation="none").uniquenesses)) < 1e-9


def test_promax_structure_and_factor_correlations(book, functions, harman, factanal_harman):
    _need(functions, "LODE.LOADINGS", "LODE.STRUCTURE", "LODE.FACTORCORR")
    r, rng = harman
    p = r.shape[0]
    args = f'{rng};{K};"ml";"promax";{HARMAN_N}'
    pattern = book.numbers(f"=LODE.LOADINGS({args})", p, K)
    structure = book.numbers(f"=LODE.STRUCTURE({args})", p, K)
    phi = book.numbers(f"=LODE.FACTORCORR({args})", K, K)
    assert np.max(np.abs(structure - pattern @ phi)) < 1e-9
    assert np.max(np.abs(np.diag(phi) - 1)) < 1e-12
    # R stats::promax (m = 4) after factanal: pattern and Phi = (U'U)^-1
    ref = factanal_harman
    matched, perm = match_columns(pattern, ref["promax"])
    assert np.max(np.abs(matched - ref["promax"])) < 1e-2
    # factor correlations up to the order and reflection of factors: the sorted absolute values
    off = ~np.eye(K, dtype=bool)
    assert np.max(np.abs(np.sort(np.abs(phi[off])) - np.sort(np.abs(ref["promax_phi"][off])))) < 1e-2
    m = lode.fit(corr=r, n_obs=HARMAN_N, factors=K, method="ml", rotation="promax")
    assert np.max(np.abs(phi - m.factor_correlations)) < 1e-9
    assert np.max(np.abs(structure - m.structure)) < 1e-9


@pytest.mark.parametrize("method", ["paf", "minres"])
@pytest.mark.parametrize("rotation", ["oblimin", "quartimin", "geomin", "quartimax", "equamax"])
def test_other_methods_and_rotations_match_the_c_library(book, functions, attitude, method, rotation):
    _need(functions, "LODE.LOADINGS", "LODE.FACTORCORR")
    x, rng = attitude
    args = f'{rng};2;"{method}";"{rotation}"'
    pattern = book.numbers(f"=LODE.LOADINGS({args})", x.shape[1], 2)
    phi = book.numbers(f"=LODE.FACTORCORR({args})", 2, 2)
    m = lode.fit(x, factors=2, method=method, rotation=rotation)
    assert np.max(np.abs(pattern - m.loadings)) < 1e-9
    assert np.max(np.abs(phi - m.factor_correlations)) < 1e-9


def test_residuals_and_fit_match_factanal(book, functions, harman, factanal_harman):
    _need(functions, "LODE.RESIDUALS", "LODE.FIT")
    r, rng = harman
    p = r.shape[0]
    ref = factanal_harman
    args = f'{rng};{K};"ml";"varimax";{HARMAN_N}'
    resid = book.numbers(f"=LODE.RESIDUALS({args})", p, p)
    # R - (L L' + diag(u)) from factanal's solution
    assert np.max(np.abs(resid - ref["resid"])) < 2e-3
    fit = book.array(f"=LODE.FIT({args})", 12, 2)
    values = {row[0]: row[1] for row in fit}
    assert list(values) == ["factors", "chi-square", "df", "p", "RMSEA", "RMSEA lower (90%)", "RMSEA upper (90%)",
                            "TLI", "BIC", "RMSR", "converged", "Heywood cases"], fit
    assert all(isinstance(v, float) for v in values.values()), fit
    assert values["factors"] == K and values["converged"] == 1.0
    chi2, df, pval = ref["stat"][:, 0]
    # factanal's STATISTIC (Bartlett's corrected likelihood ratio), dof and PVAL
    assert abs(values["chi-square"] - chi2) < 1e-3 * chi2
    assert values["df"] == df
    assert abs(values["p"] - pval) < 1e-3
    # RMSEA (Steiger & Lind 1980) and BIC (Raftery 1995) from factanal's chi-square (numpy)
    assert abs(values["RMSEA"] - np.sqrt(max(chi2 - df, 0) / (df * (HARMAN_N - 1)))) < 1e-4
    assert abs(values["BIC"] - (chi2 - df * np.log(HARMAN_N))) < 1e-3 * abs(chi2)
    assert values["RMSEA lower (90%)"] <= values["RMSEA"] <= values["RMSEA upper (90%)"]
    # RMSR: root mean square of the off-diagonal residuals, each pair once
    off = ref["resid"][np.triu_indices(p, 1)]
    assert abs(values["RMSR"] - np.sqrt(np.mean(off ** 2))) < 1e-4
    by_word = {"chi": values["chi-square"], "tli": values["TLI"]}
    m = lode.fit(corr=r, n_obs=HARMAN_N, factors=K, method="ml", rotation="varimax")
    s = m.statistics
    assert abs(by_word["chi"] - s["chi_square"]) < 1e-9 and abs(by_word["tli"] - s["tli"]) < 1e-9
    assert np.max(np.abs(resid - m.residuals)) < 1e-9


def test_fit_shows_its_error_as_text(book, functions, harman):
    _need(functions, "LODE.FIT")
    r, rng = harman
    # a correlation matrix without n_obs: the chi-square cannot be computed; the cells say why
    fit = book.array(f'=LODE.FIT({rng};{K};"ml";"varimax")', 12, 2)
    texts = [v for row in fit for v in row if isinstance(v, str)]
    assert fit[0][0] == "factors" and fit[0][1] == K  # the fit itself needs no sample size
    assert any("observ" in t.lower() or "n_obs" in t.lower() or "sample" in t.lower() for t in texts), fit


def test_factors_left_out_uses_parallel_analysis(book, functions, attitude):
    _need(functions, "LODE.LOADINGS", "LODE.FACTORCOUNT")
    x, rng = attitude
    k = int(book.value(f"=LODE.FACTORCOUNT({rng})"))
    assert k >= 1
    cells = book.numbers(f"=LODE.LOADINGS({rng})", x.shape[1], k)
    # the defaults: maximum likelihood, oblimin, the count parallel analysis suggests (the C library)
    m = lode.fit(x, factors=k, method="ml", rotation="oblimin")
    assert np.max(np.abs(cells - m.loadings)) < 1e-9


def test_rotate_matches_r_varimax_and_promax(book, functions, factanal_harman):
    _need(functions, "LODE.ROTATE")
    unrotated = factanal_harman["none"]
    rng = book.put(unrotated)
    p = unrotated.shape[0]
    ref = run_r("""
      v <- varimax(L, normalize = TRUE, eps = 1e-12); emit("v", unclass(v$loadings))
      pm <- promax(L, m = 4); emit("p", unclass(pm$loadings))
    """, {"L": unrotated})
    v = book.numbers(f'=LODE.ROTATE({rng};"varimax")', p, K)
    matched, _ = match_columns(v, ref["v"])
    # R stats::varimax (Kaiser 1958, normalised), converged tightly
    assert np.max(np.abs(matched - ref["v"])) < 1e-6
    pm = book.numbers(f'=LODE.ROTATE({rng};"promax";4)', p, K)
    matched, _ = match_columns(pm, ref["p"])
    assert np.max(np.abs(matched - ref["p"])) < 1e-2  # stats::promax's inner varimax stops at 1e-5
    res = lode.rotate(unrotated, "oblimin", gamma=0.0)
    ob = book.numbers(f'=LODE.ROTATE({rng};"oblimin";0)', p, K)
    assert np.max(np.abs(ob - res.loadings)) < 1e-9


def test_function_wizard_states_what_the_fit_statistics_and_the_count_are(office):
    """LODE.FIT's description says that with minres or PAF the chi-square family is the ML discrepancy at
    that solution, not a likelihood-ratio test; the factor count's help names the one rule every surface
    uses (tests/office/report_checks.py checks that the surfaces agree)."""
    fd = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
    found = {}
    for i in range(fd.getCount()):
        props = {p.Name: p.Value for p in fd.getByIndex(i)}
        found[props["Name"]] = props
    fit = found["LODE.FIT"]["Description"]
    assert "not a likelihood-ratio test" in fit and '"minres"' in fit and '"paf"' in fit
    rule = {a.Name: a.Description for a in found["LODE.FACTORCOUNT"]["Arguments"]}["rule"]
    assert found["LODE.NFACTORS"]["Description"].startswith("Former name of LODE.FACTORCOUNT")
    assert "reduced-matrix factor eigenvalues" in rule and "95th percentile" in rule and "500" in rule
    factors = {a.Name: a.Description for a in found["LODE.LOADINGS"]["Arguments"]}["factors"]
    assert "factor eigenvalues" in factors and "95th" in factors and "500" in factors
