"""How many peaks: modes counted on a fitted Gaussian mixture's density, Hartigan's dip
test, the bimodality coefficient, and one verdict from them.

Mixture components are not modes: two equal normals are bimodal only when their means
are more than two sds apart, so the modes are found on the fitted density itself
(local maxima on a fine grid, refined by root-finding on the derivative).

References
----------
.. [1] Hartigan, J. A. and Hartigan, P. M. (1985). The dip test of unimodality. *Annals of
       Statistics* 13(1), 70-84. doi:10.1214/aos/1176346577
.. [2] Ashman, K. M., Bird, C. M. and Zepf, S. E. (1994). Detecting bimodality in
       astronomical datasets. *Astronomical Journal* 108, 2348-2361. doi:10.1086/117248
.. [3] Zhang, C., Mapes, B. E. and Soden, B. J. (2003). Bimodality in tropical water
       vapour. *QJRMS* 129(594), 2847-2866. doi:10.1256/qj.02.166 (separation index S;
       recalled from memory)
.. [4] Pfister, R., Schwarz, K. A., Janczyk, M., Dale, R. and Freeman, J. B. (2013). Good
       things peak in pairs: a note on the bimodality coefficient. *Frontiers in
       Psychology* 4, 700. doi:10.3389/fpsyg.2013.00700
.. [5] Robertson, C. A. and Fryer, J. G. (1969). Some descriptive properties of normal
       mixtures. *Skandinavisk Aktuarietidskrift* 52, 137-146 (equal-variance normals
       are bimodal only beyond two sds apart; recalled from memory).
.. [6] Kass, R. E. and Raftery, A. E. (1995). Bayes factors. *JASA* 90(430), 773-795.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
from scipy import optimize

from .mixture import Candidate, Component, MixtureFit, MixtureOptions, fit_mixtures, weighted_from_bins, weighted_from_sorted
from .normality.result import TestResult, decide, not_applicable
from .profile import Profile
from .results import Method, Notice, Unavailable

DIP_TEST = Method(
    "Hartigan & Hartigan dip statistic against the uniform (the least favourable unimodal) null; "
    "p-value interpolated in sqrt(n) * dip from the simulated table of the diptest package",
    "Hartigan & Hartigan (1985), Annals of Statistics 13(1):70-84, doi:10.1214/aos/1176346577",
)
BC_THRESHOLD = 5.0 / 9.0  # [4]: the value for a uniform distribution
STRONG_BIC = 10.0  # [6]: a BIC difference above 10 is "very strong" evidence
CLEAR_VALLEY = 0.8  # common practice: a trough at most 80% of the lower peak is a visible dip
MIN_PROMINENCE = 0.01  # a peak must rise 1% of its height above the dip beside it
DIP_MIN_N = 4
DIP_P_FLOOR = 1e-5  # the table's smallest tail probability
MIN_N_PER_COMPONENT = 10  # common practice: do not fit more components than n/10
MIN_LEVELS = 10  # fewer distinct values than this are point masses, not rounded data


@dataclass(frozen=True)
class Extremum:
    x: float
    density: float


@dataclass(frozen=True)
class TwoComponents:
    ashman_d: float
    separation: float


@dataclass(frozen=True)
class Mixture:
    components: tuple[Component, ...]
    candidates: tuple[Candidate, ...]
    selected_k: int
    modes: tuple[Extremum, ...]
    antimodes: tuple[Extremum, ...]
    n_modes: int
    two_components: TwoComponents | Unavailable
    fitted_on: str


# The dip test's result has the shape of every other test's.
Dip = TestResult


@dataclass(frozen=True)
class BimodalityCoefficient:
    value: float | Unavailable
    threshold: float
    exceeds: bool | None
    note: str


@dataclass(frozen=True)
class ModalityVerdict:
    label: str
    n_modes: int | None
    reasons: tuple[str, ...]


@dataclass(frozen=True)
class ModalityReport:
    mixture: Mixture | Unavailable
    dip: Dip
    bimodality_coefficient: BimodalityCoefficient
    verdict: ModalityVerdict
    warnings: tuple[Notice, ...]


@dataclass(frozen=True)
class ModalityOptions:
    alpha: float = 0.05
    max_components: int = 4
    starts: int = 4
    max_iterations: int = 100
    seed: int = 0
    time_limit: float = 10.0


def _density_and_slope(x: np.ndarray, comps: tuple[Component, ...]):
    f = np.zeros_like(x)
    slope = np.zeros_like(x)
    for c in comps:
        z = (x - c.mean) / c.sd
        phi = c.weight * np.exp(-0.5 * z * z) / (c.sd * math.sqrt(2.0 * math.pi))
        f += phi
        slope -= phi * z / c.sd
    return f, slope


def _log_slope(x: np.ndarray, comps: tuple[Component, ...]) -> np.ndarray:
    """f'/f, the slope of log f: the same sign as f' and finite even where f itself
    underflows (groups a hundred sds apart)."""
    logs = np.array([math.log(c.weight) - math.log(c.sd) - 0.5 * ((x - c.mean) / c.sd) ** 2 for c in comps])
    resp = np.exp(logs - logs.max(axis=0))
    resp /= resp.sum(axis=0)
    pulls = np.array([-(x - c.mean) / c.sd**2 for c in comps])
    return (resp * pulls).sum(axis=0)


def extrema(comps: tuple[Component, ...]) -> tuple[list[Extremum], list[Extremum]]:
    """Modes and antimodes of a normal mixture density.

    All extrema lie within the span of the component means (a normal mixture's density
    is monotone outside it), so a 4096-point grid there, plus a margin, brackets every
    sign change of the slope of log f; each is refined by Brent's method. A grid point
    where the slope is exactly zero (the centre of a symmetric pair) is bracketed by its
    neighbours rather than skipped.
    """
    lo = min(c.mean for c in comps)
    hi = max(c.mean for c in comps)
    if hi == lo:
        f, _ = _density_and_slope(np.array([lo]), comps)
        return [Extremum(float(lo), float(f[0]))], []
    margin = 0.05 * (hi - lo)
    grid = np.linspace(lo - margin, hi + margin, 4097)
    sign = np.sign(_log_slope(grid, comps))
    nonzero = np.flatnonzero(sign != 0)
    modes, antimodes = [], []
    for i, j in zip(nonzero[:-1], nonzero[1:]):
        if sign[i] == sign[j]:
            continue
        root = optimize.brentq(lambda t: _log_slope(np.array([t]), comps)[0], grid[i], grid[j],
                               xtol=1e-12 * max(1.0, abs(grid[i])))
        value = float(_density_and_slope(np.array([root]), comps)[0][0])
        (modes if sign[i] > 0 else antimodes).append(Extremum(float(root), value))
    return _prominent(modes, antimodes)


def _prominent(modes: list[Extremum], antimodes: list[Extremum]) -> tuple[list[Extremum], list[Extremum]]:
    """Merge a mode into its neighbour when the dip between them is shallower than
    MIN_PROMINENCE of the lower peak (a shoulder resolved by rounding, not a peak)."""
    changed = True
    while changed and antimodes:
        changed = False
        for j, a in enumerate(antimodes):
            left, right = modes[j], modes[j + 1]
            if min(left.density, right.density) - a.density < MIN_PROMINENCE * min(left.density, right.density):
                keep = left if left.density >= right.density else right
                modes[j : j + 2] = [keep]
                del antimodes[j]
                changed = True
                break
    return modes, antimodes


def bimodality_coefficient(profile: Profile) -> BimodalityCoefficient:
    """BC = (G1^2 + 1) / (G2 + 3 (n-1)^2 / ((n-2)(n-3))) ([4], eq. 1)."""
    m = profile.moments
    n = m.n
    note = "a heuristic: above 5/9 (the uniform's value) suggests bimodality, but heavy skew alone can exceed it"
    G1, G2 = m.skewness("G1"), m.excess_kurtosis("G2")
    if G1 is None or G2 is None:
        return BimodalityCoefficient(Unavailable("needs n >= 4 and both skewness and kurtosis"), BC_THRESHOLD, None, note)
    value = (G1 * G1 + 1.0) / (G2 + 3.0 * (n - 1) ** 2 / ((n - 2) * (n - 3)))
    return BimodalityCoefficient(value, BC_THRESHOLD, value > BC_THRESHOLD, note)


def untied(profile: Profile, seed: int) -> tuple[np.ndarray | None, Notice | None]:
    """The sorted raw values, with heavy ties broken.

    Rounded data put many values on a few points; both the dip (which sees the jumps of
    the empirical distribution) and a mixture fitted by likelihood (which can put a
    narrow component on one rounded value) then report peaks that are only rounding.
    When fewer than half the values are distinct, each value is spread uniformly over
    its rounding unit (the smallest gap between distinct values), seeded from the
    request, as if the values had not been rounded.
    """
    if profile.sample is None:
        return None, None
    s = profile.sample.sorted
    n, distinct = s.size, profile.sample.n_distinct
    unit = profile.sample.rounding_unit
    # Only rounding spreads: a few distinct values (point masses) are data, not rounding.
    if distinct >= 0.5 * n or distinct < MIN_LEVELS or unit is None:
        return s, None
    rng = np.random.default_rng([seed, n])
    spread = np.sort(s + rng.uniform(-0.5 * unit, 0.5 * unit, n))
    return spread, Notice(
        "ties-spread",
        f"heavy ties ({distinct} distinct values among {n}): for the dip test and the mixture each value was "
        f"spread uniformly over its rounding unit {unit:.6g} (seeded), so that rounding is not read as peaks",
    )


def dip_test(values: np.ndarray | None, form: str, alpha: float, spread: bool) -> Dip:
    """The dip test on sorted raw values (``None`` for the aggregated forms)."""
    if values is None:
        return not_applicable(DIP_TEST, f"needs raw values, not {form}")
    n = values.size
    if n < DIP_MIN_N:
        return not_applicable(DIP_TEST, f"requires at least {DIP_MIN_N} observations; only n={n} were given")
    import diptest  # compiled; imported here so the rest of the module loads without it

    reason = "computed after spreading tied values over their rounding unit" if spread else None
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        # allow_zero=False: the dip of n values is at least 1/(2n) (the package's
        # default would report 0 for evenly spaced values).
        statistic, p = diptest.diptest(values, sort_x=False, allow_zero=False)
    if caught:
        extrapolated = "the p-value treats the table's largest n (72 000) as asymptotic"
        reason = f"{reason}; {extrapolated}" if reason else extrapolated
    bound = None
    if p < DIP_P_FLOOR:
        p, bound = DIP_P_FLOOR, "<"
    p = min(1.0, max(0.0, float(p)))
    return Dip(float(statistic), p, bound, True, decide(p, bound, alpha), reason, DIP_TEST)


def _two_components(comps: tuple[Component, ...]) -> TwoComponents | Unavailable:
    if len(comps) != 2:
        return Unavailable(f"the selected mixture has {len(comps)} component(s), not 2")
    a, b = comps
    gap = b.mean - a.mean
    return TwoComponents(
        ashman_d=math.sqrt(2.0) * abs(gap) / math.sqrt(a.sd**2 + b.sd**2),  # [2], eq. 2
        separation=gap / (2.0 * (a.sd + b.sd)),  # [3]
    )


def fit_profile(profile: Profile, values: np.ndarray | None, options: ModalityOptions) -> tuple[MixtureFit, str] | Unavailable:
    m = profile.moments
    k_max = max(1, min(options.max_components, profile.n // MIN_N_PER_COMPONENT))
    mo = MixtureOptions(max_components=k_max, starts=options.starts, max_iterations=options.max_iterations,
                        seed=options.seed, time_limit=options.time_limit)
    if values is not None:
        data = weighted_from_sorted(values, m.mean, m.sd, mo)
        how = (f"EM on the {profile.n} standardised values" if not data.compressed else
               f"EM on the values pooled into {data.y.size} cells of {mo.grid_step:g} sd, each with its exact "
               "first and second moments")
    elif profile.histogram is not None:
        h = profile.histogram
        data = weighted_from_bins(h.edges, h.counts, m.mean, m.sd)
        how = "EM on the bins as weighted midpoints, with Sheppard's h^2/12 within-bin variance"
    else:
        return Unavailable(f"a mixture needs raw values or a histogram, not {profile.form}")
    return fit_mixtures(data, mo), how


def modality(profile: Profile, options: ModalityOptions = ModalityOptions()) -> ModalityReport:
    notices = list(profile.notices)
    values, spread = untied(profile, options.seed)
    if spread:
        notices.append(spread)
    dip = dip_test(values, profile.form, options.alpha, spread is not None)
    bc = bimodality_coefficient(profile)
    fitted = fit_profile(profile, values, options)
    if isinstance(fitted, Unavailable):
        verdict = ModalityVerdict("insufficient_data", None, (
            f"modality needs raw values or a histogram; from a {profile.form} only the bimodality coefficient "
            "(a heuristic) is available",))
        return ModalityReport(fitted, dip, bc, verdict, tuple(notices))
    fit, how = fitted
    if fit.timed_out:
        notices.append(Notice("fit-time-limit", "the mixture fit reached its time limit; candidates may not have converged"))
    modes, antimodes = extrema(fit.components)
    mixture = Mixture(fit.components, fit.candidates, fit.selected_k, tuple(modes), tuple(antimodes), len(modes),
                      _two_components(fit.components), how)
    verdict = _verdict(profile, fit, mixture, dip, options.alpha)
    return ModalityReport(mixture, dip, bc, verdict, tuple(notices))


def _best_unimodal_bic(fit: MixtureFit) -> float:
    """BIC of the best candidate whose density has a single mode."""
    return min(c.bic for c in fit.candidates if len(extrema(fit.fits[c.k])[0]) == 1)


def _verdict(profile: Profile, fit: MixtureFit, mixture: Mixture, dip: Dip, alpha: float) -> ModalityVerdict:
    k_modes = mixture.n_modes
    reasons = []
    if profile.n < 2 * MIN_N_PER_COMPONENT:
        return ModalityVerdict("insufficient_data", None, (
            f"n={profile.n}: fewer than {2 * MIN_N_PER_COMPONENT} values cannot support a second component",))
    dip_text = (
        "the dip test does not apply here" if not dip.applicable
        else f"the dip test {'rejects' if dip.reject else 'does not reject'} unimodality "
             f"(p {dip.p_value_bound or '='} {dip.p_value:.3g}, alpha={alpha:g})"
    )
    if k_modes >= 2:
        advantage = _best_unimodal_bic(fit) - fit.candidates[[c.k for c in fit.candidates].index(fit.selected_k)].bic
        reasons.append(f"the selected {fit.selected_k}-component mixture has {k_modes} modes on its fitted density")
        reasons.append(dip_text)
        label = "bimodal" if k_modes == 2 else "multimodal"
        if dip.applicable:
            # With raw values the dip test must agree: a flexible mixture also finds
            # "peaks" in skewed or flat unimodal shapes, and BIC rewards it for that.
            if dip.reject:
                return ModalityVerdict(label, k_modes, tuple(reasons))
            reasons.append(
                "without the dip test's support the mixture's peaks are no evidence of groups: mixtures of normals "
                "also model a skewed or flat single group with several components"
            )
            return ModalityVerdict("unimodal", 1, tuple(reasons))
        # Binned data (no dip test): the peaks must be clear on the fitted density (every
        # trough below CLEAR_VALLEY of the lower peak beside it) and BIC must prefer the
        # mixture very strongly over the best one-mode fit.
        clear = all(a.density <= CLEAR_VALLEY * min(l.density, r.density)
                    for a, l, r in zip(mixture.antimodes, mixture.modes, mixture.modes[1:]))
        if clear and advantage > STRONG_BIC:
            reasons.append(f"the troughs are deep and BIC prefers the mixture over the best one-mode fit by "
                           f"{advantage:.1f} (> {STRONG_BIC:g}: very strong evidence)")
            return ModalityVerdict(label, k_modes, tuple(reasons))
        reasons.append(
            f"on binned data the peaks count only with troughs below {CLEAR_VALLEY:.0%} of the lower peak and a BIC "
            f"lead above {STRONG_BIC:g} (here {advantage:.1f}); this is no strong evidence of more than one peak"
        )
        return ModalityVerdict("unimodal", 1, tuple(reasons))
    reasons.append(
        f"the selected {fit.selected_k}-component mixture has one mode on its fitted density"
        + (" (its components overlap too much to make separate peaks)" if fit.selected_k > 1 else "")
    )
    reasons.append(dip_text)
    if dip.reject:
        reasons.append(
            "the dip test and the mixture disagree: a flat top, a gap, heavy rounding or outliers can do this; look at a histogram"
        )
    elif dip.applicable:
        reasons.append("not significant reads as no evidence of multimodality, not proof of one peak")
    return ModalityVerdict("unimodal", 1, tuple(reasons))
