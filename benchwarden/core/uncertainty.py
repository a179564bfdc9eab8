"""The measurement model of hold tests, the leak watch and observed draws: a gauge's
uncertainty (EN 837-1 classes, GUM rectangular distributions), the budget of a mass change
between two readings, the one least-squares fit of mass against time, and the verdict rule.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from benchwarden.core import gas as g
from benchwarden.errors import InputError

__all__ = ["SQRT3", "K_EXPANDED", "GaugeSpec", "U_T_DEFAULT", "U_T_UNMEASURED", "mass_change_uncertainty", "MassFit",
           "mass_sensitivities",
           "fit_mass_loss", "poly_lsq", "VERDICTS", "verdict_of"]

SQRT3 = math.sqrt(3.0)
#: Coverage factor of the expanded uncertainty U = k·u (about 95 %, GUM 6.2).
K_EXPANDED = 2.0


@dataclass(frozen=True)
class GaugeSpec:
    """A gauge: span [Pa] (full scale minus zero), accuracy class [% of span], resolution [Pa],
    and the maker's repeatability [Pa, a ± limit] where one is given."""

    span_pa: float
    accuracy_class: float
    resolution_pa: float | None = None
    repeatability_pa: float | None = None

    @property
    def budget(self) -> str:
        """How a difference of two readings is budgeted: ``repeatability`` (the maker's figure:
        the gauge's systematic error cancels in the difference) or ``uncorrelated`` (each reading
        carries the full class error, as if independent: conservative)."""
        return "repeatability" if self.repeatability_pa is not None else "uncorrelated"

    @property
    def u_difference_pa(self) -> float:
        """Standard uncertainty of each of the two readings of a difference (GUM, JCGM 100:2008,
        §5.2 correlated inputs): with a declared repeatability r, u = r/√3 ⊕ resolution/√12 (the
        systematic part of the error is common to both readings and cancels in their difference);
        without one, the full :attr:`u_reading_pa` (the readings taken as uncorrelated).

        >>> round(GaugeSpec(250e5, 1.0, None, 0.05e5).u_difference_pa)   # 0.05 bar / √3
        2887
        """
        if self.repeatability_pa is None:
            return self.u_reading_pa
        u = self.repeatability_pa / SQRT3
        if self.resolution_pa is not None:
            u = math.hypot(u, self.resolution_pa / (2.0 * SQRT3))
        return u

    @property
    def resolved_drop_pa(self) -> float:
        """The smallest fall between two readings of this gauge that is a fall at all: the
        expanded uncertainty (k = 2) of their difference, k·√2·:attr:`u_difference_pa` [Pa]
        (GUM, JCGM 100:2008, §6.2; the two readings' uncertainties combined in quadrature).

        >>> round(GaugeSpec(315e5, 1.6).resolved_drop_pa / 1e5, 2)   # 5.04 bar MPE: 2·√2·5.04/√3
        8.23
        """
        return K_EXPANDED * math.sqrt(2.0) * self.u_difference_pa

    @property
    def mpe_pa(self) -> float:
        """Maximum permitted error (EN 837-1): class % of span."""
        return self.accuracy_class / 100.0 * self.span_pa

    @property
    def u_reading_pa(self) -> float:
        """Standard uncertainty of one reading (GUM, JCGM 100:2008, rectangular distributions):
        MPE/√3 from the accuracy class, ⊕ resolution/√12 where a resolution is given (a
        resolution not given is taken as already inside the class's MPE).

        >>> round(GaugeSpec(250e5, 1.0).u_reading_pa)            # 2.5 bar MPE / √3
        144338
        >>> round(GaugeSpec(250e5, 1.0, 0.5e5).u_reading_pa)     # ⊕ 0.5 bar / √12
        145057
        """
        u = self.mpe_pa / SQRT3
        if self.resolution_pa is not None:
            u = math.hypot(u, self.resolution_pa / (2.0 * SQRT3))
        return u


def mass_sensitivities(gas: g.Gas, V: float, T: float, p: float) -> tuple[float, float, float]:
    """mass, ∂m/∂p, ∂m/∂T at (T, p) by central differences of the real density.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    V : Volume, [m³]
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    tuple of float
        (m [kg], ∂m/∂p [kg/Pa], ∂m/∂T [kg/K]).

    References
    ----------
    JCGM 100:2008 (GUM), sensitivity coefficients (5.1.3) by central differences; CoolProp HEOS
    (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).
    """
    dp = max(p * 1e-5, 1.0)
    dT = 0.01
    m = g.density(gas, T, p) * V
    dmdp = (g.density(gas, T, p + dp) - g.density(gas, T, p - dp)) * V / (2 * dp)
    dmdT = (g.density(gas, T + dT, p) - g.density(gas, T - dT, p)) * V / (2 * dT)
    return m, dmdp, dmdT


#: Default standard uncertainty of a temperature reading [K] when temperatures are given, and
#: the larger one used when they are not (an unmeasured change of about 1 K is common).
U_T_DEFAULT = 0.5
U_T_UNMEASURED = 1.0


def mass_change_uncertainty(dm1p: float, dm2p: float, dm1T: float, dm2T: float, u_p: float,
                            u_T: float) -> float:
    """Standard uncertainty [kg] of the held mass change m1 − m2 (GUM law of propagation, the
    one budget of both hold-test modes): each of the two pressure readings contributes
    ∂m/∂p·u_p and each temperature ∂m/∂T·u_T, taken as uncorrelated (conservative for one
    gauge: its zero error cancels in a difference, its hysteresis and non-linearity do not).

    Parameters
    ----------
    dm1p : ∂m/∂p at the first reading, [kg/Pa]
    dm2p : ∂m/∂p at the second reading, [kg/Pa]
    dm1T : ∂m/∂T at the first reading, [kg/K]
    dm2T : ∂m/∂T at the second reading, [kg/K]
    u_p : Standard uncertainty of a pressure reading, [Pa]
    u_T : Standard uncertainty of a temperature reading, [K]

    Returns
    -------
    float
        Standard uncertainty of the mass change [kg].

    References
    ----------
    JCGM 100:2008 (GUM), law of propagation of uncertainty (5.1.2).

    Examples
    --------
    >>> round(mass_change_uncertainty(1.0, 1.0, 0.0, 0.0, 3.0, 0.5), 4)    # √2 · 3
    4.2426
    """
    return math.sqrt((dm1p * u_p) ** 2 + (dm2p * u_p) ** 2 + (dm1T * u_T) ** 2 + (dm2T * u_T) ** 2)


@dataclass(frozen=True)
class MassFit:
    """The mass of a held or drawn volume fitted against time (:func:`fit_mass_loss`)."""

    #: mass loss rate [kg/s] (positive: the mass falls) and its fit standard error [kg/s]
    rate_kg_s: float
    se_kg_s: float
    #: combined standard uncertainty of the rate [kg/s]: the fit's ⊕ the readings' budget
    u_kg_s: float
    #: the budget of the mass change between the first and the last reading [kg]
    u_dm_kg: float
    #: ∂m/∂p at the last reading [kg/Pa], the span of the series [s]
    dmdp_last: float
    span_s: float
    #: the fitted line's coefficients (slope [kg/s], intercept [kg]) about the mean time
    coef: tuple[float, float]
    t_mean_s: float


def poly_lsq(x: Any, y: Any, deg: int) -> tuple[Any, Any, float]:
    """Least-squares polynomial of degree ``deg`` through (x, y), as ``numpy.polyfit`` gives it,
    from the moments of x centred and scaled to [−1, 1] (one pass of a few dot products instead
    of a Vandermonde matrix and its SVD: a 100 000-row log costs a millisecond).

    Parameters
    ----------
    x, y : Abscissae and ordinates, [any units] (at least ``deg + 1`` points, x not all equal)
    deg : Degree of the polynomial, [-] (1 or 2 here)

    Returns
    -------
    coef : array
        Coefficients, highest power first (``numpy.polyval`` order), in the units of x and y.
    inv : array
        The unscaled covariance, (XᵀX)⁻¹ in the same order: times the residual variance
        rss / (n − deg − 1) it is ``numpy.polyfit(..., cov=True)``'s covariance.
    rss : float
        Sum of squared residuals, [y²].

    References
    ----------
    Normal equations of linear least squares (e.g. Press et al., Numerical Recipes, 3rd ed.,
    §15.4), checked against ``numpy.polyfit``.
    """
    import numpy as np

    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    xm, ym = float(x.mean()), float(y.mean())
    h = float(np.max(np.abs(x - xm))) or 1.0
    u = (x - xm) / h
    v = y - ym
    powers = [np.ones_like(u), u]
    for _ in range(2, 2 * deg + 1):
        powers.append(powers[-1] * u)
    gram = np.array([[float(powers[i + j].sum()) for j in range(deg + 1)] for i in range(deg + 1)])
    rhs = np.array([float(powers[i] @ v) for i in range(deg + 1)])
    inv_u = np.linalg.inv(gram)
    a = inv_u @ rhs  # ascending powers of u, for y − ȳ
    resid = v - sum(a[i] * powers[i] for i in range(deg + 1))
    rss = float(resid @ resid)
    # back to x: y = ȳ + Σ a_i ((x − x̄)/h)^i, expanded about x = 0
    asc = np.zeros(deg + 1)
    asc[0] = ym
    for i in range(deg + 1):  # (x − x̄)^i / h^i by the binomial theorem
        for k in range(i + 1):
            asc[k] += a[i] * math.comb(i, k) * (-xm) ** (i - k) / h**i
    # covariance: scale by 1/h^(i+j), then the same linear map from centred to plain powers
    J = np.zeros((deg + 1, deg + 1))
    for i in range(deg + 1):
        for k in range(i + 1):
            J[k, i] = math.comb(i, k) * (-xm) ** (i - k) / h**i
    inv = J @ inv_u @ J.T
    return asc[::-1].copy(), inv[::-1, ::-1].copy(), rss


def fit_mass_loss(gas: g.Gas, volume_m3: float, t_s: Any, p_abs_pa: Any, T_k: Any, masses_kg: Any,
                  u_p: float, u_T: float) -> MassFit:
    """Least-squares rate of mass loss from a series of readings, with its GUM uncertainty: the
    one fit and the one budget of logged hold tests, the leak watch and a session's observed
    draw.

    Parameters
    ----------
    gas : the gas in the volume
    volume_m3 : Held volume, [m³]
    t_s, p_abs_pa, T_k : Times [s], absolute pressures [Pa] and temperatures [K] of the readings
    masses_kg : The held mass at each reading, [kg] (real-gas density × volume, by the caller)
    u_p : Standard uncertainty of each of the first and last pressure readings, [Pa]
    u_T : Standard uncertainty of each of the first and last temperatures, [K]

    Returns
    -------
    MassFit
        Rate of mass loss [kg/s], its standard error and standard uncertainty [kg/s], the
        uncertainty of the mass change [kg] and the fit's coefficients.

    Notes
    -----
    Slope by ``numpy.polyfit`` about the mean time, its standard error from the covariance (with
    three points the residual variance is applied by hand; with two the slope is the difference
    and the standard error zero). The systematic part is the mass-change budget of two readings
    (:func:`mass_change_uncertainty`) over the span, combined in quadrature with the standard
    error.

    References
    ----------
    .. [1] JCGM 100:2008 (GUM), 5.1 (law of propagation of uncertainty).
    .. [2] EN 13184:2001 / ASTM E2930-13, pressure-change (decay) leak test.

    Examples
    --------
    Three readings of an ideal straight fall of 1 g/h, no scatter, no gauge uncertainty:

    >>> import numpy as np
    >>> n2 = g.parse_gas("nitrogen")
    >>> f = fit_mass_loss(n2, 0.05, np.array([0.0, 3600.0, 7200.0]), np.array([2e6, 2e6, 2e6]),
    ...                   np.array([293.15] * 3), np.array([1.0, 0.999, 0.998]), 0.0, 0.0)
    >>> round(f.rate_kg_s * 3600, 6), round(f.u_kg_s, 12)
    (0.001, 0.0)
    """
    import numpy as np

    t = np.asarray(t_s, dtype=float)
    m = np.asarray(masses_kg, dtype=float)
    n = len(t)
    span = float(t[-1] - t[0])
    if n < 2 or span <= 0:
        raise InputError("a rate needs at least two readings at different times")
    tm = float(t.mean())
    tc = t - tm
    if n >= 3:
        coef, inv, rss = poly_lsq(tc, m, 1)
        s2 = rss / (n - 2)
        se = math.sqrt(max(0.0, float(inv[0, 0]) * s2))
        slope, icpt = float(coef[0]), float(coef[1])
    else:
        slope = float((m[-1] - m[0]) / span)
        icpt, se = float(m.mean()), 0.0
    p = np.asarray(p_abs_pa, dtype=float)
    T = np.asarray(T_k, dtype=float)
    _, dm1p, dm1T = mass_sensitivities(gas, volume_m3, float(T[0]), float(p[0]))
    _, dm2p, dm2T = mass_sensitivities(gas, volume_m3, float(T[-1]), float(p[-1]))
    u_dm = mass_change_uncertainty(dm1p, dm2p, dm1T, dm2T, u_p, u_T)
    return MassFit(-slope, se, math.hypot(se, u_dm / span), u_dm, dm2p, span, (slope, icpt), tm)


#: The verdicts of a hold test or the leak watch, worst first.
VERDICTS = ("leak", "likely-leak", "pressure-rose", "inconclusive", "no-leak-resolved")


def verdict_of(rate: float, u_rate: float, target: float, k: float = K_EXPANDED) -> str:
    """The verdict of a leak-rate estimate against a target leak rate.

    Parameters
    ----------
    rate : float
        Estimated leak rate (mass loss positive), [any flow unit, e.g. sccm]
    u_rate : float
        Its standard uncertainty (1σ), [same unit]
    target : float
        The leak rate the test must resolve, [same unit]
    k : float
        Coverage factor of the expanded uncertainty U = k·u, [-] (2: about 95 %)

    Returns
    -------
    verdict : str
        ``pressure-rose`` (rate < −U: the held mass rose beyond the uncertainty, which a sealed
        volume cannot do), ``leak`` (rate > U), ``likely-leak`` (rate above the target and above
        u, not above U), ``no-leak-resolved`` (rate + U < target), else ``inconclusive``.

    Notes
    -----
    Decision rule with an expanded uncertainty as in JCGM 106:2012 (conformity assessment,
    guarded acceptance): "fine" is said only when the whole interval lies below the target.

    References
    ----------
    .. [1] JCGM 100:2008, Evaluation of measurement data — Guide to the expression of
       uncertainty in measurement (GUM), 6.2 (expanded uncertainty).
    .. [2] JCGM 106:2012, Evaluation of measurement data — The role of measurement uncertainty
       in conformity assessment, 8 (acceptance and rejection zones).

    Examples
    --------
    >>> verdict_of(215.6, 121.1, 48.0), verdict_of(-6900.0, 1600.0, 20.0), verdict_of(1.0, 2.0, 20.0)
    ('likely-leak', 'pressure-rose', 'no-leak-resolved')
    """
    U = k * u_rate
    if not (math.isfinite(rate) and math.isfinite(U)):
        return "inconclusive"
    if rate < -U:
        return "pressure-rose"
    if rate > U:
        return "leak"
    if rate > target and rate > u_rate:
        return "likely-leak"
    if rate + U < target:
        return "no-leak-resolved"
    return "inconclusive"
