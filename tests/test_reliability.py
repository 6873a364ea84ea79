"""Checks of planner.reliability against independent references (scipy, closed forms)."""

from __future__ import annotations

import math
import subprocess
import sys

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import integrate, optimize, special, stats

from planner.reliability import (
    _WG,
    _WGK,
    _XGK,
    ReplacementOptimum,
    WeibullFit,
    _life_integral,
    age_replacement_cost_rate,
    b_life,
    conditional_failure,
    eta_from_share,
    fit_weibull_censored,
    optimal_replacement,
    weibull_cdf,
    weibull_survival,
)

BETAS = [0.5, 0.9, 1.0, 1.7, 3.2, 8.0]
ETAS = [1e-3, 1.0, 137.5, 2.5e5]
FRACTIONS = [1e-6, 0.01, 0.3, 0.9, 1.0, 1.4, 2.2, 3.0]  # t / eta


def _sf(x: float, beta: float, eta: float) -> float:
    return float(stats.weibull_min.sf(x, beta, scale=eta))


# ---- distribution functions -------------------------------------------------------------------


@pytest.mark.parametrize("beta", BETAS)
@pytest.mark.parametrize("eta", ETAS)
def test_cdf_and_survival_match_scipy(beta: float, eta: float) -> None:
    for frac in FRACTIONS:
        t = frac * eta
        # reference: scipy.stats.weibull_min (general-purpose library)
        assert weibull_cdf(t, beta, eta) == pytest.approx(
            stats.weibull_min.cdf(t, beta, scale=eta), rel=1e-12, abs=0
        )
        assert weibull_survival(t, beta, eta) == pytest.approx(_sf(t, beta, eta), rel=1e-12, abs=0)


def test_before_time_zero_nothing_has_failed() -> None:
    for t in (0.0, -5.0, -math.inf):
        assert weibull_cdf(t, 2.0, 10.0) == 0.0
        assert weibull_survival(t, 2.0, 10.0) == 1.0


@pytest.mark.parametrize("beta", BETAS)
@pytest.mark.parametrize("eta", ETAS)
def test_conditional_failure_matches_scipy(beta: float, eta: float) -> None:
    for frac in FRACTIONS:
        for window in (1e-4, 0.05, 0.5):
            t1, t2 = frac * eta, (frac + window) * eta
            # reference: scipy.stats.weibull_min (general-purpose library), 1 - R(t2)/R(t1),
            # taken through logsf because R(t1) underflows at the far end of the grid
            log_ratio = stats.weibull_min.logsf(t2, beta, scale=eta) - stats.weibull_min.logsf(
                t1, beta, scale=eta
            )
            got = conditional_failure(t1, t2, beta, eta)
            assert got == pytest.approx(-math.expm1(log_ratio), rel=1e-10, abs=0)
            if _sf(t1, beta, eta) > 1e-300:
                plain = 1 - _sf(t2, beta, eta) / _sf(t1, beta, eta)
                assert got == pytest.approx(plain, rel=1e-9, abs=1e-15)


def test_conditional_failure_far_in_the_tail() -> None:
    # R(40 eta) = exp(-64000) underflows to 0, so the plain ratio is 0/0.
    beta, eta, t1, t2 = 3.0, 10.0, 400.0, 400.01
    assert _sf(t1, beta, eta) == 0.0
    # reference: scipy.stats.weibull_min.logsf (general-purpose library), 1 - exp(logR2 - logR1)
    log_ratio = stats.weibull_min.logsf(t2, beta, scale=eta) - stats.weibull_min.logsf(
        t1, beta, scale=eta
    )
    expected = -math.expm1(log_ratio)
    assert 0.9 < expected < 1.0
    assert conditional_failure(t1, t2, beta, eta) == pytest.approx(expected, rel=1e-9)


def test_conditional_failure_edges() -> None:
    assert conditional_failure(5.0, 5.0, 2.0, 10.0) == 0.0
    # from time zero the conditional probability is the plain CDF (definition, NIST §8.1.6.2)
    assert conditional_failure(0.0, 7.0, 2.0, 10.0) == pytest.approx(
        stats.weibull_min.cdf(7.0, 2.0, scale=10.0), rel=1e-13
    )
    with pytest.raises(ValueError, match="before"):
        conditional_failure(5.0, 4.0, 2.0, 10.0)
    with pytest.raises(ValueError):
        conditional_failure(1.0, 2.0, 0.0, 10.0)
    with pytest.raises(ValueError):
        weibull_cdf(1.0, 2.0, -1.0)
    with pytest.raises(ValueError):
        weibull_cdf(math.nan, 2.0, 1.0)


@pytest.mark.parametrize("beta", BETAS)
@pytest.mark.parametrize("eta", ETAS)
def test_b_life_matches_scipy_ppf(beta: float, eta: float) -> None:
    for p in (1e-9, 0.001, 0.1, 0.5, 0.632, 0.99):
        # reference: scipy.stats.weibull_min.ppf (general-purpose library)
        expected = stats.weibull_min.ppf(p, beta, scale=eta)
        assert b_life(p, beta, eta) == pytest.approx(expected, rel=1e-12)
    assert b_life(0.0, beta, eta) == 0.0
    with pytest.raises(ValueError):
        b_life(1.0, beta, eta)


@pytest.mark.parametrize("beta", BETAS)
@pytest.mark.parametrize("share", [1e-6, 0.02, 0.1, 0.5, 0.95])
@pytest.mark.parametrize("at", [1.0, 0.25, 120_000.0])
def test_eta_from_share_reproduces_the_share(beta: float, share: float, at: float) -> None:
    eta = eta_from_share(share, beta, at)
    # reference: scipy.stats.weibull_min (general-purpose library)
    assert stats.weibull_min.cdf(at, beta, scale=eta) == pytest.approx(share, rel=1e-12)


def test_eta_from_share_rejects_impossible_shares() -> None:
    for share in (0.0, 1.0, -0.1, 1.5):
        with pytest.raises(ValueError):
            eta_from_share(share, 2.0)


# ---- censored maximum likelihood ---------------------------------------------------------------


def _scipy_fit(failures, suspensions) -> tuple[float, float]:
    # reference: scipy.stats.weibull_min.fit with scipy.stats.CensoredData (general-purpose library)
    data = stats.CensoredData(uncensored=np.asarray(failures), right=np.asarray(suspensions))
    c, loc, scale = stats.weibull_min.fit(data, floc=0)
    assert loc == 0
    return float(c), float(scale)


def _scipy_loglik(failures, suspensions, beta: float, eta: float) -> float:
    # reference: scipy.stats.weibull_min logpdf/logsf (general-purpose library)
    return float(
        np.sum(stats.weibull_min.logpdf(np.asarray(failures), beta, scale=eta))
        + np.sum(stats.weibull_min.logsf(np.asarray(suspensions), beta, scale=eta))
    )


def _check_against_scipy(failures, suspensions) -> WeibullFit:
    fit = fit_weibull_censored(failures, suspensions)
    c, scale = _scipy_fit(failures, suspensions)
    assert fit.beta == pytest.approx(c, rel=1e-4)
    assert fit.eta == pytest.approx(scale, rel=1e-4)
    assert (fit.failures, fit.suspensions) == (len(failures), len(suspensions))
    ll_here = _scipy_loglik(failures, suspensions, fit.beta, fit.eta)
    assert fit.log_likelihood == pytest.approx(ll_here, rel=1e-12, abs=1e-9)
    # A maximum: scipy's own optimum must not beat it.
    assert ll_here >= _scipy_loglik(failures, suspensions, c, scale) - 1e-9
    return fit


@pytest.mark.parametrize(
    ("beta", "eta", "seed"),
    [(0.8, 100.0, 1), (1.5, 1000.0, 2), (3.5, 2.0, 3), (6.0, 1e5, 4), (2.2, 0.7, 5)],
)
def test_censored_fit_matches_scipy_on_generated_samples(beta: float, eta: float, seed: int):
    rng = np.random.default_rng(seed)
    life = stats.weibull_min.rvs(beta, scale=eta, size=80, random_state=rng)
    censor = rng.uniform(0.0, 2.0 * eta, size=80)
    failures, suspensions = life[life <= censor], censor[life > censor]
    assert len(failures) > 5 and len(suspensions) > 5
    fit = _check_against_scipy(list(failures), list(suspensions))
    assert fit.beta == pytest.approx(beta, rel=0.5)  # sanity: near the generating law


def test_censored_fit_matches_scipy_on_a_small_hand_built_set() -> None:
    failures = [410.0, 620.0, 750.0, 980.0, 1200.0]
    suspensions = [500.0, 800.0, 800.0, 1100.0, 1300.0, 1300.0]
    _check_against_scipy(failures, suspensions)


def test_identical_failures_with_a_later_suspension_still_fit() -> None:
    _check_against_scipy([5.0, 5.0], [8.0])


def test_uncensored_fit_matches_scipy() -> None:
    rng = np.random.default_rng(11)
    data = stats.weibull_min.rvs(2.7, scale=45.0, size=50, random_state=rng)
    fit = fit_weibull_censored(list(data), [])
    # reference: scipy.stats.weibull_min.fit, complete data (general-purpose library)
    c, _, scale = stats.weibull_min.fit(data, floc=0)
    assert fit.beta == pytest.approx(c, rel=1e-4)
    assert fit.eta == pytest.approx(scale, rel=1e-4)
    assert fit.suspensions == 0


def test_fit_is_scale_equivariant_without_overflow() -> None:
    failures = [410.0, 620.0, 750.0, 980.0, 1200.0]
    suspensions = [500.0, 1300.0]
    base = fit_weibull_censored(failures, suspensions)
    for k in (1e-200, 1e200):  # t^beta would overflow/underflow without scaling
        fit = fit_weibull_censored([k * t for t in failures], [k * t for t in suspensions])
        assert fit.beta == pytest.approx(base.beta, rel=1e-12)
        assert fit.eta == pytest.approx(k * base.eta, rel=1e-12)


@pytest.mark.parametrize(
    ("failures", "suspensions", "message"),
    [
        ([], [100.0, 200.0], "no failures"),
        ([100.0, 0.0], [], "positive"),
        ([100.0], [-3.0], "positive"),
        ([100.0, math.nan], [], "positive"),
        ([300.0, 300.0, 300.0], [], "no fit"),
        ([300.0, 300.0], [100.0, 300.0], "no fit"),
        ([300.0], [], "no fit"),
    ],
)
def test_fit_refuses_what_has_no_answer(failures, suspensions, message) -> None:
    with pytest.raises(ValueError, match=message):
        fit_weibull_censored(failures, suspensions)


# ---- age replacement ---------------------------------------------------------------------------


def _scipy_cost_rate(u: float, beta: float, eta: float, cp: float, cf: float) -> float:
    # reference: scipy.integrate.quad + scipy.stats.weibull_min (general-purpose library),
    # formula from Barlow & Proschan, Mathematical Theory of Reliability, 1965
    r = _sf(u, beta, eta)
    life, _ = integrate.quad(_sf, 0, u, args=(beta, eta), epsabs=0, epsrel=1e-13, limit=200)
    return (cp * r + cf * (1 - r)) / life


def test_gauss_kronrod_rules_are_exact_to_their_degree() -> None:
    # Kronrod 15 is exact to degree 22, its embedded Gauss 7 to degree 13
    # (reference: exact moments 2/(k+1) of x^k on [-1, 1]; Piessens et al., QUADPACK, 1983)
    for k in range(0, 23, 2):
        pairs = zip(_WGK[:7], _XGK[:7], strict=True)
        kronrod = _WGK[7] * (k == 0) + sum(2 * w * x**k for w, x in pairs)
        assert kronrod == pytest.approx(2 / (k + 1), rel=1e-14)
    for k in range(0, 14, 2):
        pairs = zip(_WG[:3], (1, 3, 5), strict=True)
        gauss = _WG[3] * (k == 0) + sum(2 * w * _XGK[j] ** k for w, j in pairs)
        assert gauss == pytest.approx(2 / (k + 1), rel=1e-14)


@pytest.mark.parametrize("beta", [0.3, 0.7, 1.0, 1.5, 3.7, 8.0])
@pytest.mark.parametrize("frac", [1e-6, 0.3, 1.0, 2.5, 10.0])
def test_life_integral_matches_quad_and_incomplete_gamma(beta: float, frac: float) -> None:
    eta = 2.0
    u = frac * eta
    got = _life_integral(u, beta, eta)
    # reference: scipy.integrate.quad (general-purpose library)
    quad, _ = integrate.quad(_sf, 0, u, args=(beta, eta), epsabs=0, epsrel=1e-13, limit=200)
    assert got == pytest.approx(quad, rel=1e-11)
    # reference: closed form eta/beta * lower incomplete gamma(1/beta, (u/eta)^beta),
    # via scipy.special.gamma and gammainc (general-purpose library)
    closed = eta / beta * special.gamma(1 / beta) * special.gammainc(1 / beta, frac**beta)
    assert got == pytest.approx(closed, rel=1e-12)


@pytest.mark.parametrize(
    ("u", "beta", "eta", "cp", "cf"),
    [(0.4, 2.0, 1.0, 1.0, 5.0), (30.0, 3.5, 100.0, 300.0, 3000.0), (1.0, 0.6, 1.0, 2.0, 9.0),
     (2.0, 1.0, 1.0, 1.0, 1.0), (7e4, 2.4, 1e5, 650.0, 4200.0)],
)
def test_cost_rate_matches_quad(u: float, beta: float, eta: float, cp: float, cf: float) -> None:
    expected = _scipy_cost_rate(u, beta, eta, cp, cf)
    assert age_replacement_cost_rate(u, beta, eta, cp, cf) == pytest.approx(expected, rel=1e-11)


def test_cost_rate_tends_to_failure_cost_over_mean_life() -> None:
    # Never replacing early: C -> cf / MTTF, MTTF = eta * Gamma(1 + 1/beta)
    # (reference: NIST/SEMATECH e-Handbook §8.1.6.2, Weibull mean; math.gamma)
    beta, eta, cp, cf = 2.0, 3.0, 1.0, 7.0
    assert age_replacement_cost_rate(60.0, beta, eta, cp, cf) == pytest.approx(
        cf / (eta * math.gamma(1 + 1 / beta)), rel=1e-12
    )


@pytest.mark.parametrize(
    ("beta", "eta", "cp", "cf", "upper"),
    [(2.0, 1.0, 1.0, 5.0, 10.0), (1.2, 1.0, 1.0, 50.0, 100.0), (3.5, 100.0, 300.0, 3000.0, 200.0),
     (1.05, 1.0, 1.0, 1e4, 10.0), (4.0, 1.2e5, 600.0, 6000.0, 1e5)],
)
def test_optimum_matches_minimize_scalar(beta, eta, cp, cf, upper) -> None:
    opt = optimal_replacement(beta, eta, cp, cf, upper)
    assert isinstance(opt, ReplacementOptimum) and not opt.at_upper_bound
    # reference: scipy.optimize.minimize_scalar, bounded (general-purpose library)
    ref = optimize.minimize_scalar(
        _scipy_cost_rate, bounds=(1e-9 * min(upper, eta), upper), args=(beta, eta, cp, cf),
        method="bounded", options={"xatol": 1e-12 * upper},
    )
    assert ref.success
    assert opt.u_star == pytest.approx(ref.x, rel=1e-5)
    assert opt.cost_rate == pytest.approx(ref.fun, rel=1e-10)
    assert opt.cost_rate <= ref.fun * (1 + 1e-12)
    # First-order condition h(T) * int_0^T R - F(T) = cp / (cf - cp)
    # (reference: Barlow & Proschan 1965; hazard and integral via scipy.stats and quad)
    t = opt.u_star
    hazard = stats.weibull_min.pdf(t, beta, scale=eta) / _sf(t, beta, eta)
    life, _ = integrate.quad(_sf, 0, t, args=(beta, eta), epsabs=0, epsrel=1e-13)
    lhs = hazard * life - stats.weibull_min.cdf(t, beta, scale=eta)
    assert lhs == pytest.approx(cp / (cf - cp), rel=1e-5)


def test_scan_finds_the_global_minimum_on_a_flat_cost_curve() -> None:
    # Steep wear-out, failure only 1.5x the planned job: past eta the cost rate is nearly flat, and
    # a bounded local search over (0, 5] (scipy 1.17 minimize_scalar) stops near u = 3.26 there.
    beta, eta, cp, cf, upper = 8.0, 1.0, 1.0, 1.5, 5.0
    opt = optimal_replacement(beta, eta, cp, cf, upper)
    assert opt is not None and not opt.at_upper_bound
    # reference: brute-force grid, life integral in closed form eta/beta * lower incomplete
    # gamma(1/beta, (u/eta)^beta) via scipy.special (general-purpose library)
    u = np.linspace(1e-3, upper, 20_001)
    r = np.exp(-((u / eta) ** beta))
    life = eta / beta * special.gamma(1 / beta) * special.gammainc(1 / beta, (u / eta) ** beta)
    i = int(np.argmin((cp * r + cf * (1 - r)) / life))
    # reference: scipy.optimize.minimize_scalar, bounded, inside the brute-force basin
    ref = optimize.minimize_scalar(
        _scipy_cost_rate, bounds=(u[i - 1], u[i + 1]), args=(beta, eta, cp, cf),
        method="bounded", options={"xatol": 1e-12},
    )
    assert opt.u_star == pytest.approx(ref.x, rel=1e-5)
    assert opt.cost_rate == pytest.approx(ref.fun, rel=1e-10)


@pytest.mark.parametrize(
    ("beta", "cp", "cf"), [(1.0, 1.0, 5.0), (0.7, 1.0, 5.0), (2.0, 5.0, 5.0), (3.0, 6.0, 5.0)]
)
def test_no_optimum_without_wear_out_or_penalty(beta: float, cp: float, cf: float) -> None:
    assert optimal_replacement(beta, 1.0, cp, cf, 10.0) is None


def test_no_optimum_for_constant_hazard_matches_flat_cost_rate() -> None:
    # beta = 1: C(u) = (cp e^-u + cf (1 - e^-u)) / (1 - e^-u), non-increasing (Barlow & Proschan)
    rates = [_scipy_cost_rate(u, 1.0, 1.0, 1.0, 5.0) for u in (0.1, 1.0, 5.0, 20.0)]
    assert rates == sorted(rates, reverse=True)


def test_optimum_moves_earlier_as_failure_gets_dearer() -> None:
    ages = []
    for ratio in (1.5, 2.0, 5.0, 20.0, 100.0, 1000.0):
        opt = optimal_replacement(2.5, 1.0, 1.0, ratio, 50.0)
        assert opt is not None and not opt.at_upper_bound
        ages.append(opt.u_star)
    assert all(later < earlier for earlier, later in zip(ages, ages[1:], strict=False))


def test_optimum_beyond_the_interval_is_capped_and_flagged() -> None:
    free = optimal_replacement(2.0, 1.0, 1.0, 5.0, 10.0)
    assert free is not None and not free.at_upper_bound
    capped = optimal_replacement(2.0, 1.0, 1.0, 5.0, 0.5 * free.u_star)
    assert capped is not None and capped.at_upper_bound
    assert capped.u_star == 0.5 * free.u_star
    assert capped.cost_rate == pytest.approx(
        _scipy_cost_rate(capped.u_star, 2.0, 1.0, 1.0, 5.0), rel=1e-11
    )
    roomy = optimal_replacement(2.0, 1.0, 1.0, 5.0, 2.0 * free.u_star)
    assert roomy is not None and not roomy.at_upper_bound
    assert roomy.u_star == pytest.approx(free.u_star, rel=1e-6)


def test_replacement_rejects_bad_input() -> None:
    with pytest.raises(ValueError):
        optimal_replacement(2.0, 1.0, 1.0, 5.0, 0.0)
    with pytest.raises(ValueError):
        age_replacement_cost_rate(-1.0, 2.0, 1.0, 1.0, 5.0)
    with pytest.raises(ValueError):
        age_replacement_cost_rate(1.0, 2.0, 1.0, 0.0, 5.0)


def test_module_does_not_load_numpy_or_scipy() -> None:
    code = "import sys, planner.reliability; print(sorted({'numpy','scipy'} & set(sys.modules)))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


# ---- properties --------------------------------------------------------------------------------

betas = st.floats(min_value=0.05, max_value=20.0)
etas = st.floats(min_value=1e-3, max_value=1e6)
fractions = st.floats(min_value=-2.0, max_value=1e3)


@given(betas, etas, fractions, st.floats(min_value=0.0, max_value=1e3))
def test_probabilities_stay_in_unit_interval(beta, eta, frac, window) -> None:
    t = frac * eta
    for p in (
        weibull_cdf(t, beta, eta),
        weibull_survival(t, beta, eta),
        conditional_failure(t, t + window * eta, beta, eta),
    ):
        assert 0.0 <= p <= 1.0


@given(
    betas,
    etas,
    st.floats(min_value=0.0, max_value=5.0),
    st.floats(min_value=0.0, max_value=3.0),
    st.floats(min_value=0.0, max_value=3.0),
)
def test_conditional_failure_rises_with_the_horizon(beta, eta, frac, d1, d2) -> None:
    t = frac * eta
    short, long_ = sorted((d1, d2))
    p_short = conditional_failure(t, t + short * eta, beta, eta)
    p_long = conditional_failure(t, t + long_ * eta, beta, eta)
    assert p_long >= p_short * (1 - 1e-12)


@given(
    st.floats(min_value=1.01, max_value=20.0),
    etas,
    st.floats(min_value=0.0, max_value=3.0),
    st.floats(min_value=0.0, max_value=3.0),
    st.floats(min_value=1e-4, max_value=2.0),
)
def test_wear_out_makes_an_older_belt_riskier_over_the_same_window(beta, eta, a, b, w) -> None:
    young, old = sorted((a * eta, b * eta))
    p_young = conditional_failure(young, young + w * eta, beta, eta)
    p_old = conditional_failure(old, old + w * eta, beta, eta)
    assert p_old >= p_young * (1 - 1e-12)
