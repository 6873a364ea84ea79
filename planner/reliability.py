"""Weibull life numerics: probabilities, censored maximum-likelihood fit, age replacement.

Pure Python and ``math`` only; the tests check every function against scipy. Parameters fed in
here (beta, the share failed by the interval) are assumptions the user can change, never a
maker's figure.
"""

from __future__ import annotations

import heapq
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

_EPS = 2.220446049250313e-16
# exp(-exp(7)) < 1e-476 is zero in floating point: a log-hazard above this means R = 0.
_LOG_HAZARD_NIL = 7.0


@dataclass(frozen=True)
class WeibullFit:
    """A two-parameter Weibull fitted by maximum likelihood to failures and suspensions."""

    beta: float
    eta: float
    failures: int
    suspensions: int
    log_likelihood: float


@dataclass(frozen=True)
class ReplacementOptimum:
    """The replacement age minimising cost per unit life within ``(0, upper]``."""

    u_star: float
    cost_rate: float
    at_upper_bound: bool


def _check_params(beta: float, eta: float) -> None:
    if not (math.isfinite(beta) and beta > 0):
        raise ValueError(f"beta must be positive and finite, got {beta!r}")
    if not (math.isfinite(eta) and eta > 0):
        raise ValueError(f"eta must be positive and finite, got {eta!r}")


def _hazard(t: float, beta: float, eta: float) -> float:
    """Cumulative hazard H(t) = (t/eta)^beta; zero before time zero."""
    if math.isnan(t):
        raise ValueError("t must be a number, got nan")
    if t <= 0:
        return 0.0
    if math.isinf(t):
        return math.inf
    try:
        return (t / eta) ** beta  # direct power: exp(b*log) would lose ~b*|log t| ulps
    except OverflowError:
        return math.inf


def weibull_cdf(t: float, beta: float, eta: float) -> float:
    """F(t) = 1 - exp(-(t/eta)^beta), 0 for t <= 0.

    Source: NIST/SEMATECH e-Handbook of Statistical Methods, §8.1.6.2 and §1.3.6.6.8.
    """
    _check_params(beta, eta)
    return -math.expm1(-_hazard(t, beta, eta))  # expm1 keeps tiny early-life probabilities exact


def weibull_survival(t: float, beta: float, eta: float) -> float:
    """R(t) = exp(-(t/eta)^beta), 1 for t <= 0.

    Source: NIST/SEMATECH e-Handbook of Statistical Methods, §8.1.6.2 and §1.3.6.6.8.
    """
    _check_params(beta, eta)
    return math.exp(-_hazard(t, beta, eta))


def conditional_failure(t_now: float, t_later: float, beta: float, eta: float) -> float:
    """P(fail by t_later | survived to t_now) = 1 - R(t_later)/R(t_now), in [0, 1].

    Computed as 1 - exp(-(H(t_later) - H(t_now))) so it stays right where R underflows.
    Source: NIST/SEMATECH e-Handbook of Statistical Methods, §8.1.6.2 (conditional reliability).
    """
    _check_params(beta, eta)
    if math.isnan(t_now) or math.isnan(t_later):
        raise ValueError("times must be numbers, got nan")
    if t_later < t_now:
        raise ValueError(f"t_later ({t_later}) is before t_now ({t_now})")
    if t_now <= 0:
        dh = _hazard(t_later, beta, eta)
    elif t_later > 2 * t_now:  # H(t_now) <= H(t_later)/2^beta: the plain difference is exact enough
        dh = _hazard(t_later, beta, eta) - _hazard(t_now, beta, eta)
    else:
        # H(t1)*((t2/t1)^b - 1) via expm1/log1p: no cancellation between two huge hazards; in
        # logs, since a steep shape (a fit to failures close together) overflows either factor.
        y = beta * math.log1p((t_later - t_now) / t_now)
        if y == 0:
            return 0.0
        try:
            dh = _hazard(t_now, beta, eta) * math.expm1(y)
        except OverflowError:
            log_dh = beta * (math.log(t_now) - math.log(eta)) + y + math.log(-math.expm1(-y))
            dh = math.inf if log_dh > _LOG_HAZARD_NIL else math.exp(log_dh)
    return min(1.0, max(0.0, -math.expm1(-dh)))


def b_life(p: float, beta: float, eta: float) -> float:
    """B_p life, the age by which a share p has failed: eta * (-ln(1-p))^(1/beta).

    Source: NIST/SEMATECH e-Handbook of Statistical Methods, §8.1.6.2 (Weibull percentiles).
    """
    _check_params(beta, eta)
    if not 0 <= p < 1:
        raise ValueError(f"p must be in [0, 1), got {p!r}")
    return eta * (-math.log1p(-p)) ** (1.0 / beta)


def eta_from_share(share: float, beta: float, at: float = 1.0) -> float:
    """The eta that makes F(at) = share: at / (-ln(1-share))^(1/beta).

    With life measured as the fraction of the maker's interval used, ``at=1.0`` means "the share
    failed by the interval". Source: inverse of the NIST/SEMATECH §8.1.6.2 Weibull CDF.
    """
    if not 0 < share < 1:
        raise ValueError(f"share must be in (0, 1), got {share!r}")
    if not (math.isfinite(at) and at > 0):
        raise ValueError(f"at must be positive and finite, got {at!r}")
    _check_params(beta, 1.0)
    return at / (-math.log1p(-share)) ** (1.0 / beta)


def _check_times(times: Sequence[float], what: str) -> list[float]:
    out = [float(t) for t in times]
    bad = [t for t in out if not (math.isfinite(t) and t > 0)]
    if bad:
        raise ValueError(f"{what} times must be positive and finite; got {bad[0]!r}")
    return out


def fit_weibull_censored(failures: Sequence[float], suspensions: Sequence[float]) -> WeibullFit:
    """Maximum-likelihood beta and eta from failure times and right-censored suspensions.

    Solves the profile-likelihood equation in beta,
    sum(t^b ln t)/sum(t^b) - 1/b - mean(ln t_failures) = 0 (sums over all times), by
    safeguarded Newton inside a bisection bracket; then eta = (sum t^b / r)^(1/b).
    Source: W. Nelson, Applied Life Data Analysis, 1982 (Weibull ML with censoring).
    """
    fail = _check_times(failures, "failure")
    susp = _check_times(suspensions, "suspension")
    if not fail:
        raise ValueError("no failures: a Weibull fit needs at least one failure time")
    r = len(fail)
    log_max = math.log(max(fail + susp))
    # Logs of times scaled by the largest: all <= 0, so t^b never overflows and the sum is >= 1.
    ls = [math.log(t) - log_max for t in fail + susp]
    mean_fail = math.fsum(ls[:r]) / r
    if mean_fail >= -8 * _EPS:  # every failure at the largest time: likelihood grows with b
        raise ValueError(
            "no fit: all failures at one time with no later suspension (no spread; beta would "
            "be infinite)"
        )

    def moments(b: float) -> tuple[float, float, float]:
        w = [math.exp(b * x) for x in ls]
        s0 = math.fsum(w)
        m = math.fsum(wi * x for wi, x in zip(w, ls, strict=True)) / s0
        var = math.fsum(wi * (x - m) ** 2 for wi, x in zip(w, ls, strict=True)) / s0
        return s0, m - 1.0 / b - mean_fail, var + 1.0 / b**2

    # g(b) rises strictly (weighted variance + 1/b^2 > 0) from -inf to -mean_fail > 0: one root.
    lo, hi = 0.5, 1.0
    while moments(lo)[1] >= 0:
        lo /= 2
        if lo < 1e-8:
            raise ValueError("no fit: beta below 1e-8 (times spread over too many decades)")
    while moments(hi)[1] <= 0:
        lo, hi = hi, hi * 2
        if hi > 1e7:
            raise ValueError("no fit: failure times too close together (beta above 1e7)")
    b = 0.5 * (lo + hi)
    for _ in range(200):
        _, g, dg = moments(b)
        if g == 0:
            break
        lo, hi = (b, hi) if g < 0 else (lo, b)
        step = g / dg
        b_new = b - step
        if not lo < b_new < hi:
            b_new = 0.5 * (lo + hi)  # Newton left the bracket: bisect instead
        if abs(b_new - b) <= 4 * _EPS * b or hi - lo <= 4 * _EPS * hi:
            b = b_new
            break
        b = b_new
    s0 = moments(b)[0]
    log_eta = log_max + (math.log(s0) - math.log(r)) / b
    sum_log_fail = math.fsum(math.log(t) for t in fail)
    total_h = math.fsum(math.exp(b * (x + log_max - log_eta)) for x in ls)
    ll = r * math.log(b) - r * b * log_eta + (b - 1) * sum_log_fail - total_h
    return WeibullFit(b, math.exp(log_eta), r, len(susp), ll)


# Gauss-Kronrod 7/15 abscissae and weights on [-1, 1] (QUADPACK qk15, Piessens et al. 1983).
_XGK = (
    0.991455371120812639206854697526329, 0.949107912342758524526189684047851,
    0.864864423359769072789712788640926, 0.741531185599394439863864773280788,
    0.586087235467691130294144845693013, 0.405845151377397166906606412076961,
    0.207784955007898467600689403773245, 0.0,
)
_WGK = (
    0.022935322010529224963732008058970, 0.063092092629978553290700663189204,
    0.104790010322250183839876322541518, 0.140653259715525918745189590510238,
    0.169004726639267902826583426598550, 0.190350578064785409913256402421014,
    0.204432940075298892414161999234649, 0.209482141084727828012999174891714,
)
_WG = (
    0.129484966168869693270611432679082, 0.279705391489276667901467771423780,
    0.381830050505118944950369775488975, 0.417959183673469387755102040816327,
)


def _gk15(f: Callable[[float], float], a: float, b: float) -> tuple[float, float]:
    c, h = 0.5 * (a + b), 0.5 * (b - a)
    fc = f(c)
    k, g = _WGK[7] * fc, _WG[3] * fc
    for j in range(7):
        s = f(c - h * _XGK[j]) + f(c + h * _XGK[j])
        k += _WGK[j] * s
        if j % 2:
            g += _WG[j // 2] * s
    return k * h, abs(k - g) * h


def _integrate(
    f: Callable[[float], float], breaks: Sequence[float], rel: float = 1e-13, limit: int = 2000
) -> float:
    """Globally adaptive Gauss-Kronrod: split the worst interval until the error is small."""
    heap = []
    for a, b in zip(breaks, breaks[1:], strict=False):
        v, e = _gk15(f, a, b)
        heap.append((-e, a, b, v))
    heapq.heapify(heap)
    while len(heap) < limit:
        total = math.fsum(item[3] for item in heap)
        err = math.fsum(-item[0] for item in heap)
        if err <= max(rel, 50 * _EPS) * abs(total):
            return total
        _, a, b, _ = heapq.heappop(heap)
        mid = 0.5 * (a + b)
        for lo, hi in ((a, mid), (mid, b)):
            v, e = _gk15(f, lo, hi)
            heapq.heappush(heap, (-e, lo, hi, v))
    return math.fsum(item[3] for item in heap)


def _life_integral(u: float, beta: float, eta: float) -> float:
    """Integral of R(x) over [0, u], the mean life used per cycle of an age-u policy."""
    us = u / eta
    # x = u z^m, m > 1 for beta < 1: the weak x^beta kink at 0 becomes z^(m(1+beta)-1), smooth.
    m = 1 if beta >= 1 else math.ceil(2 / beta)
    log_us = math.log(us)

    def f(z: float) -> float:
        log_h = beta * (log_us + m * math.log(z))
        # exp(-exp(log_h)) is below the smallest float long before exp(log_h) overflows (a
        # steep fitted shape puts log_h in the thousands just past eta)
        return 0.0 if log_h > _LOG_HAZARD_NIL else z ** (m - 1) * math.exp(-math.exp(log_h))

    # Split where x = eta: R falls from ~1 to ~0 around there, sharply when beta is large. With
    # a steep shape the fall takes ~1/beta of eta, which a 15-point rule over [0, eta] would
    # step over and call converged: split also where the log-hazard is each of `levels`.
    levels = (-30.0, -8.0, -3.0, -1.0, 0.0, 1.0, 2.0, 4.0) if beta > 8 else (0.0,)
    inner = sorted({z for c in levels if 0 < (z := math.exp((c / beta - log_us) / m)) < 1})
    breaks = [0.0, *inner, 1.0]
    return eta * us * m * _integrate(f, breaks)


def age_replacement_cost_rate(u: float, beta: float, eta: float, cp: float, cf: float) -> float:
    """Cost per unit life of replacing at age u or at failure, whichever first.

    C(u) = (cp R(u) + cf (1 - R(u))) / integral_0^u R(x) dx, with cp the planned and cf the
    failure cost. Source: Barlow & Proschan, Mathematical Theory of Reliability, 1965.
    """
    _check_params(beta, eta)
    if not (math.isfinite(u) and u > 0):
        raise ValueError(f"u must be positive and finite, got {u!r}")
    if not (cp > 0 and cf > 0 and math.isfinite(cp) and math.isfinite(cf)):
        raise ValueError(f"costs must be positive and finite, got cp={cp!r}, cf={cf!r}")
    h = _hazard(u, beta, eta)
    return (cp * math.exp(-h) - cf * math.expm1(-h)) / _life_integral(u, beta, eta)


def _golden(f: Callable[[float], float], a: float, b: float, tol: float) -> tuple[float, float]:
    inv_phi = (math.sqrt(5) - 1) / 2
    c, d = b - inv_phi * (b - a), a + inv_phi * (b - a)
    fc, fd = f(c), f(d)
    while b - a > tol:
        if fc <= fd:
            b, d, fd = d, c, fc
            c = b - inv_phi * (b - a)
            fc = f(c)
        else:
            a, c, fc = c, d, fd
            d = a + inv_phi * (b - a)
            fd = f(d)
    return (c, fc) if fc <= fd else (d, fd)


def optimal_replacement(
    beta: float, eta: float, cp: float, cf: float, upper: float
) -> ReplacementOptimum | None:
    """The age u* in (0, upper] minimising the age-replacement cost rate, or None.

    None when beta <= 1 (constant or falling hazard: the cost rate never rises, so replacing
    early never pays) or cf <= cp (a failure costs no more than the planned job). A coarse log
    scan finds the basin, golden section refines it (in log u). ``at_upper_bound`` says the
    minimum sits at ``upper``: the caller passes the maker's interval and must not go past it.
    Source: Barlow & Proschan, Mathematical Theory of Reliability, 1965.
    """
    _check_params(beta, eta)
    if not (math.isfinite(upper) and upper > 0):
        raise ValueError(f"upper must be positive and finite, got {upper!r}")
    age_replacement_cost_rate(upper, beta, eta, cp, cf)  # validates the costs
    if beta <= 1 or cf <= cp:
        return None

    def cost(log_u: float) -> float:
        return age_replacement_cost_rate(math.exp(log_u), beta, eta, cp, cf)

    # 20 points a decade from 1e-9 of the smaller scale: the optimum shrinks like (cp/cf)^(1/b).
    hi = math.log(upper)
    lo = math.log(min(upper, eta)) - 9 * math.log(10)
    n = max(2, math.ceil((hi - lo) / math.log(10) * 20))
    grid = [lo + (hi - lo) * i / n for i in range(n + 1)]
    costs = [cost(x) for x in grid]
    i = min(range(n + 1), key=costs.__getitem__)
    a = grid[i - 1] if i > 0 else grid[0] - math.log(10)
    b = grid[min(i + 1, n)]
    log_u, c_star = _golden(cost, a, b, 1e-10)
    c_upper = costs[n]
    if c_upper <= c_star or log_u >= hi:
        return ReplacementOptimum(upper, c_upper, True)
    return ReplacementOptimum(math.exp(log_u), c_star, False)
