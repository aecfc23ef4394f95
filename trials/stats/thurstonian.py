"""Thurstonian models of the forced-choice methods: proportion correct and d'.

Each discrimination method of the registry (:mod:`trials.methods`) has a psychometric
function ``pc(d')``: the probability of a correct answer when the two samples differ by
``d'`` standard deviations of the panelists' momentary sensations (Thurstone 1927).

- 2-AFC: ``pc = Phi(d'/sqrt 2)`` (Green and Swets 1966).
- 3-AFC: ``pc = integral phi(z - d') Phi(z)^2 dz`` (Frijters 1979; Ennis 1993).
- duo-trio: ``pc = 1 - Phi(d'/sqrt 2) - Phi(d'/sqrt 6) + 2 Phi(d'/sqrt 2) Phi(d'/sqrt 6)``
  (Ennis 1993, after David and Trivedi 1962).
- triangle: ``pc = 2 integral_0^inf [Phi(-z sqrt 3 + d' sqrt(2/3)) +
  Phi(-z sqrt 3 - d' sqrt(2/3))] phi(z) dz`` (Frijters 1979; Ennis 1993).
- unspecified tetrad: ``pc = 1 - 2 integral phi(z) [2 Phi(z) Phi(z - d') -
  Phi(z - d')^2] dz`` (Ennis et al. 1998; Ennis and Jesionka 2011).
- specified tetrad (the two cups of the stronger sample are to be picked):
  ``pc = integral 2 phi(z) Phi(z) [1 - Phi(z - d')]^2 dz``, the probability that both
  stronger cups lie above the larger of the two weaker ones (``2 phi(z) Phi(z)`` is the
  density of that larger one); chance ``pc(0) = 1/6``, one right pair of six. The
  decision rule (pick the two strongest) is that of Ennis et al. (1998, from memory);
  the integral is derived here and checked against ``scipy.integrate.quad`` and a
  simulation of the rule.
- two-out-of-five: no Thurstonian model is built (its registry entry names none); its
  analysis reports the proportion of discriminators only.
- paired preference uses the 2-AFC model (a Thurstonian model of preference with the
  share of the more-chosen sample as ``pc``); this is a modelling choice, stated in every
  result that uses it.

The integrals are evaluated with a fixed Gauss-Legendre rule (vectorised over d'), and
checked in the tests against ``scipy.integrate.quad`` and a Monte Carlo simulation of
each method's decision rule.

Conventions
-----------
- ``pc`` at or below the guessing probability gives ``d' = 0`` (the model has no
  negative d' for these methods; common practice, Ennis 1993).
- ``pc`` at or above ``pc(DPRIME_MAX)`` (including ``pc = 1``) gives ``d' = DPRIME_MAX``
  (15.0), reported as a lower bound (``capped=True``), never infinity.

References
----------
Thurstone, L. L. (1927). A law of comparative judgment. Psychol. Rev. 34:273-286.
Frijters, J. E. R. (1979). The paradox of discriminatory nondiscriminators resolved.
Chem. Senses 4:355-358; and Br. J. Math. Stat. Psychol. 32:229-241.
Ennis, D. M. (1993). The power of sensory discrimination methods. J. Sensory Stud.
8:353-370. doi:10.1111/j.1745-459X.1993.tb00225.x
Ennis, D. M. and Jesionka, V. (2011). The power of sensory discrimination methods
revisited. J. Sensory Stud. 26:371-382. doi:10.1111/j.1745-459X.2011.00353.x
Ennis, J. M., Ennis, D. M., Yip, D. and O'Mahony, M. (1998). Thurstonian models for
variants of the method of tetrads. Br. J. Math. Stat. Psychol. 51:205-215.
Bi, J. (2006). Sensory Discrimination Tests and Measurements. Blackwell (B-values,
chapter 2).
Bi, J., Ennis, D. M. and O'Mahony, M. (1997). How to estimate and use the variance of d'
from difference tests. J. Sensory Stud. 12:87-104.
"""

from __future__ import annotations

import bisect
import math
from collections.abc import Callable
from dataclasses import dataclass
from functools import cache

import numpy as np
from scipy import special

from trials.errors import TrialsError
from trials.methods import (
    MODEL_2AFC,
    MODEL_3AFC,
    MODEL_DUO_TRIO,
    MODEL_SPECIFIED_TETRAD,
    MODEL_TETRAD,
    MODEL_TRIANGLE,
    Family,
    all_methods,
    get_method,
)
from trials.model import Record

DPRIME_MAX = 15.0
"""Largest d' reported; ``pc`` at or above ``pc(DPRIME_MAX)`` maps here (a lower bound)."""

_SQRT2 = np.sqrt(2.0)
_SQRT3 = np.sqrt(3.0)
_SQRT6 = np.sqrt(6.0)
_C_TRI = np.sqrt(2.0 / 3.0)
_INV_SQRT_2PI = 1.0 / np.sqrt(2.0 * np.pi)

# Gauss-Legendre nodes: whole line (truncated to +-12, where phi < 1e-31) and half line.
_GL_X, _GL_W = np.polynomial.legendre.leggauss(240)
_Z_FULL = 12.0 * _GL_X
_W_FULL = 12.0 * _GL_W
_Z_HALF = 6.0 * (_GL_X + 1.0)  # [0, 12]
_W_HALF = 6.0 * _GL_W


def _Phi(x):
    return special.ndtr(x)


def _phi(x):
    return _INV_SQRT_2PI * np.exp(-0.5 * np.square(x))


# ------------------------------------------------------------ psychometric functions
# Each takes a 1-d float array of d' >= 0 and returns (pc, dpc/dd').


def _pc_2afc(d):
    return _Phi(d / _SQRT2), _phi(d / _SQRT2) / _SQRT2


def _pc_duotrio(d):
    a, b = _Phi(d / _SQRT2), _Phi(d / _SQRT6)
    da, db = _phi(d / _SQRT2) / _SQRT2, _phi(d / _SQRT6) / _SQRT6
    return 1.0 - a - b + 2.0 * a * b, -da - db + 2.0 * (da * b + a * db)


def _pc_3afc(d):
    t = _Z_FULL[None, :]
    w = _W_FULL * _phi(_Z_FULL)
    s = t + d[:, None]
    cdf = _Phi(s)
    return (cdf**2) @ w, (2.0 * cdf * _phi(s)) @ w


def _pc_triangle(d):
    z = _Z_HALF[None, :]
    w = _W_HALF * _phi(_Z_HALF)
    u = -_SQRT3 * z + _C_TRI * d[:, None]
    v = -_SQRT3 * z - _C_TRI * d[:, None]
    pc = 2.0 * ((_Phi(u) + _Phi(v)) @ w)
    dpc = 2.0 * _C_TRI * ((_phi(u) - _phi(v)) @ w)
    return pc, dpc


def _pc_tetrad(d):
    z = _Z_FULL[None, :]
    w = _W_FULL * _phi(_Z_FULL)
    zd = z - d[:, None]
    cz, czd, pzd = _Phi(z), _Phi(zd), _phi(zd)
    pc = 1.0 - 2.0 * ((2.0 * cz * czd - czd**2) @ w)
    dpc = 4.0 * ((pzd * (cz - czd)) @ w)
    return pc, dpc


def _pc_specified_tetrad(d):
    z = _Z_FULL[None, :]
    w = _W_FULL * 2.0 * _phi(_Z_FULL) * _Phi(_Z_FULL)  # density of the larger weak cup
    zd = z - d[:, None]
    above = 1.0 - _Phi(zd)
    return (above**2) @ w, (2.0 * above * _phi(zd)) @ w


MODELS: dict[str, Callable] = {
    MODEL_2AFC: _pc_2afc,
    MODEL_DUO_TRIO: _pc_duotrio,
    MODEL_3AFC: _pc_3afc,
    MODEL_TRIANGLE: _pc_triangle,
    MODEL_TETRAD: _pc_tetrad,
    MODEL_SPECIFIED_TETRAD: _pc_specified_tetrad,
}
"""The psychometric functions by model key (``MethodSpec.model`` of the registry names
one); each takes a 1-d array of d' >= 0 and returns ``(pc, dpc/dd')``."""
_MODELS = MODELS

CHANCE: dict[str, float] = {
    MODEL_2AFC: 1 / 2,  # Green and Swets (1966)
    MODEL_DUO_TRIO: 1 / 2,  # Ennis (1993)
    MODEL_3AFC: 1 / 3,  # Frijters (1979)
    MODEL_TRIANGLE: 1 / 3,  # Frijters (1979)
    MODEL_TETRAD: 1 / 3,  # Ennis and Jesionka (2011)
    MODEL_SPECIFIED_TETRAD: 1 / 6,  # one right pair of the C(4, 2) = 6 pairs
}
"""Each model's exact chance level ``pc(0)`` (its quadrature agrees within 1e-15)."""

_PREFERENCE_NOTE = ("d' from the 2-AFC model (Thurstonian preference): pc is the "
                    "share choosing the more-chosen sample")


def _model_key(method: str) -> str:
    """The registry's model key for ``method``, checked to be one of :data:`MODELS`."""
    spec = get_method(method)
    if spec.is_forced_choice and not spec.has_dprime:
        raise TrialsError(f"method {method!r} has no Thurstonian model here: its analysis "
                          "gives the proportion of discriminators pd, no d'")
    if not spec.is_forced_choice or spec.model not in MODELS:
        raise TrialsError(f"method {method!r} has no Thurstonian model (forced choice only)")
    return spec.model


def model_name(method: str) -> str:
    """The psychometric model used for ``method``.

    Parameters
    ----------
    method : str
        A method of the registry.

    Returns
    -------
    str
        The registry name of the discrimination method whose model applies (paired
        preference: ``"2afc"``, whose model it shares).

    Notes
    -----
    Raises :class:`~trials.errors.TrialsError` for a method without a forced-choice
    model (ratings, rankings) and :class:`~trials.errors.UnknownMethodError` for a name
    the registry does not hold. Preference as 2-AFC: Thurstonian model of paired
    preference (see the module docstring).

    References
    ----------
    Ennis, D. M. (1993). J. Sensory Stud. 8:353-370.
    """
    key = _model_key(method)
    spec = get_method(method)
    if spec.family is Family.DISCRIMINATION:
        return spec.name
    return next((m.name for m in all_methods()
                 if m.family is Family.DISCRIMINATION and m.model == key), spec.name)


def _as_array(x, what: str) -> tuple[np.ndarray, bool]:
    arr = np.asarray(x, dtype=float)
    scalar = arr.ndim == 0
    arr = np.atleast_1d(arr).ravel() if scalar else arr
    if not np.all(np.isfinite(arr)):
        raise TrialsError(f"{what} must be finite numbers, got {x!r}")
    return arr, scalar


def pc_from_dprime(d, *, method: str):
    """Proportion correct predicted by the Thurstonian model for d'.

    Parameters
    ----------
    d : float or array-like
        d' values, >= 0.
    method : str
        A forced-choice method of the registry.

    Returns
    -------
    float or numpy.ndarray
        ``pc(d')`` (same shape as ``d``).

    Notes
    -----
    Formulas in the module docstring (Frijters 1979; Ennis 1993; Ennis and Jesionka 2011).
    Integrals by a 240-node Gauss-Legendre rule; agreement with adaptive quadrature is
    better than 1e-10 (tested).

    References
    ----------
    Ennis, D. M. (1993). J. Sensory Stud. 8:353-370.
    """
    fn = _MODELS[_model_key(method)]
    arr, scalar = _as_array(d, "d'")
    if np.any(arr < 0):
        raise TrialsError(f"d' must be >= 0, got {d!r}")
    shape = np.shape(d)
    pc, _ = fn(arr.ravel())
    pc = np.clip(pc, 0.0, 1.0)
    return float(pc[0]) if scalar else pc.reshape(shape)


def pc_slope(d, *, method: str):
    """Derivative ``dpc/dd'`` of the psychometric function (for the delta method).

    Parameters
    ----------
    d : float or array-like
        d' values (the sign is ignored).
    method : str
        A forced-choice method of the registry.

    Returns
    -------
    float or numpy.ndarray
        The slope at each d'.

    Notes
    -----
    Analytic derivatives of the formulas of the module docstring, differentiated under
    the integral sign (2-AFC: ``phi(d'/sqrt 2)/sqrt 2``; 3-AFC: ``integral 2 phi(t)
    Phi(t + d') phi(t + d') dt``; tetrad: ``4 integral phi(z) phi(z - d') [Phi(z) -
    Phi(z - d')] dz``; triangle and duo-trio likewise). Tested against central
    differences. The slope is 0 at d' = 0 for the triangle, duo-trio and tetrad.

    References
    ----------
    Bi, J., Ennis, D. M. and O'Mahony, M. (1997). J. Sensory Stud. 12:87-104.
    """
    fn = _MODELS[_model_key(method)]
    arr, scalar = _as_array(d, "d'")
    shape = np.shape(d)
    _, slope = fn(np.abs(arr.ravel()))
    return float(slope[0]) if scalar else slope.reshape(shape)


def _guess(method: str) -> float:
    """The method's guessing probability; a method without one has no Thurstonian model."""
    guess = get_method(method).guess
    if guess is None:
        raise TrialsError(f"method {method!r} has no Thurstonian model (forced choice only)")
    return float(guess)


@cache
def _grid(model: str) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """Knots for the inverse: ``s = sqrt(pc - guess)``, d' and dd'/ds (cubic Hermite).

    In ``s`` the inverse is smooth at d' = 0 both for the methods whose slope is 0 there
    (triangle, duo-trio, tetrad: ``pc - guess ~ k d'^2``) and for the others.
    """
    d = np.concatenate([np.linspace(0.0, 3.0, 3001), np.linspace(3.0, DPRIME_MAX, 4801)[1:]])
    pc, slope = _MODELS[model](d)
    guess = CHANCE[model]  # exact chance level (quadrature: within 1e-15)
    pc[0] = guess
    keep = np.concatenate([[True], np.diff(pc) > 0])  # drop the flat, rounded-off tail
    keep &= np.maximum.accumulate(pc) == pc
    d, pc, slope = d[keep], pc[keep], slope[keep]
    s = np.sqrt(np.maximum(pc - guess, 0.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        m = np.where(slope > 1e-300, 2.0 * s / slope, np.inf)
    # At d' = 0: 0 where the slope is positive (2-AFC, 3-AFC: d' ~ s^2 / k); where the
    # slope is 0 (triangle, duo-trio, tetrad: d' ~ s / sqrt(k)), the first secant.
    m[0] = 0.0 if slope[0] > 1e-9 else (d[1] - d[0]) / (s[1] - s[0])
    return s, d, m, guess


def _invert(model: str, pc: np.ndarray) -> np.ndarray:
    s_knots, d_knots, m_knots, guess = _grid(model)
    s = np.sqrt(np.maximum(pc - guess, 0.0))
    i = np.clip(np.searchsorted(s_knots, s, side="right") - 1, 0, len(s_knots) - 2)
    s0, s1 = s_knots[i], s_knots[i + 1]
    d0, d1 = d_knots[i], d_knots[i + 1]
    m0, m1 = m_knots[i], m_knots[i + 1]
    h = s1 - s0
    t = (s - s0) / h
    lin = d0 + t * (d1 - d0)
    with np.errstate(invalid="ignore", over="ignore"):
        t2, t3 = t * t, t * t * t
        herm = ((2 * t3 - 3 * t2 + 1) * d0 + (t3 - 2 * t2 + t) * h * m0
                + (-2 * t3 + 3 * t2) * d1 + (t3 - t2) * h * m1)
    ok = np.isfinite(herm) & (herm >= d0) & (herm <= d1)
    out = np.where(ok, herm, lin)
    out[s >= s_knots[-1]] = DPRIME_MAX if d_knots[-1] >= DPRIME_MAX else d_knots[-1]
    out[pc >= 1.0] = DPRIME_MAX
    out[pc <= guess] = 0.0
    return out


@cache
def _knot_lists(model: str) -> tuple[list[float], list[float], list[float], float]:
    s, d, m, guess = _grid(model)
    return s.tolist(), d.tolist(), m.tolist(), guess


def _invert_scalar(model: str, pc: float) -> float:
    """The same interpolation as :func:`_invert` for one number, without numpy overhead."""
    s_knots, d_knots, m_knots, guess = _knot_lists(model)
    if pc <= guess:
        return 0.0
    if pc >= 1.0:
        return DPRIME_MAX
    s = math.sqrt(pc - guess)
    if s >= s_knots[-1]:
        return DPRIME_MAX if d_knots[-1] >= DPRIME_MAX else d_knots[-1]
    i = min(max(bisect.bisect_right(s_knots, s) - 1, 0), len(s_knots) - 2)
    s0, s1, d0, d1 = s_knots[i], s_knots[i + 1], d_knots[i], d_knots[i + 1]
    m0, m1 = m_knots[i], m_knots[i + 1]
    h = s1 - s0
    t = (s - s0) / h
    lin = d0 + t * (d1 - d0)
    if math.isinf(m0) or math.isinf(m1):
        return lin
    t2 = t * t
    t3 = t2 * t
    herm = ((2 * t3 - 3 * t2 + 1) * d0 + (t3 - 2 * t2 + t) * h * m0
            + (-2 * t3 + 3 * t2) * d1 + (t3 - t2) * h * m1)
    return herm if d0 <= herm <= d1 else lin


def dprime_from_pc(pc, *, method: str, newton_steps: int = 0):
    """d' for a proportion correct: the inverse of the psychometric function.

    Parameters
    ----------
    pc : float or array-like
        Proportions correct in [0, 1].
    method : str
        A forced-choice method of the registry.
    newton_steps : int
        Optional Newton refinements on the exact function after the interpolation
        (the interpolation alone agrees with a root finder to about 1e-8; tested).

    Returns
    -------
    float or numpy.ndarray
        d' (same shape as ``pc``); 0 where ``pc`` is at or below the guessing
        probability; ``DPRIME_MAX`` where ``pc = 1`` or ``pc`` rounds to
        ``pc(DPRIME_MAX)`` in double precision.

    Notes
    -----
    Cubic Hermite interpolation on a dense precomputed grid of the exact function
    (d' step 0.001 up to 3, 0.0025 above), in the variable ``s = sqrt(pc - guess)``
    with knot slopes ``dd'/ds = 2 s / pc'(d')`` from the analytic derivative. Vectorised:
    invert many proportions in one call.

    References
    ----------
    Ennis, D. M. (1993). J. Sensory Stud. 8:353-370 (the psychometric functions).
    """
    model = _model_key(method)
    if isinstance(pc, (float, int)) and not isinstance(pc, bool) and not newton_steps:
        if not 0.0 <= pc <= 1.0:  # also refuses nan
            raise TrialsError(f"pc must lie in [0, 1], got {pc!r}")
        return _invert_scalar(model, float(pc))
    arr, scalar = _as_array(pc, "pc")
    if np.any((arr < 0) | (arr > 1)):
        raise TrialsError(f"pc must lie in [0, 1], got {pc!r}")
    shape = np.shape(pc)
    flat = arr.ravel()
    out = _invert(model, flat)
    if newton_steps:
        guess = _grid(model)[3]
        inside = (out > 0) & (out < DPRIME_MAX) & (flat > guess) & (flat < 1.0)
        x, target = out[inside], flat[inside]
        fn = _MODELS[model]
        for _ in range(newton_steps):
            f, slope = fn(x)
            safe = np.where(slope > 0, slope, 1.0)
            x = np.clip(x - np.where(slope > 0, (f - target) / safe, 0.0), 0.0, DPRIME_MAX)
        out[inside] = x
    return float(out[0]) if scalar else out.reshape(shape)


def b_value(d, *, method: str) -> float | None:
    """The B-value of Bi, Ennis and O'Mahony (1997): ``var(d') = B / n``.

    Parameters
    ----------
    d : float
        d' (> 0 for the triangle, duo-trio and tetrad, whose slope is 0 at d' = 0).
    method : str
        A forced-choice method of the registry.

    Returns
    -------
    float or None
        ``B = pc (1 - pc) / pc'(d')^2``; None where the slope is 0 (the delta method
        does not apply) or d' is at the cap.

    Notes
    -----
    Delta method: ``var(pc_hat) = pc (1 - pc) / n`` and ``d' = f^{-1}(pc)`` give
    ``var(d') = pc (1 - pc) / (n f'(d')^2)``. Assumes independent binomial answers
    (one answer per panelist, or no overdispersion).

    References
    ----------
    Bi, J., Ennis, D. M. and O'Mahony, M. (1997). J. Sensory Stud. 12:87-104.
    Bi, J. (2006). Sensory Discrimination Tests and Measurements, ch. 2.
    """
    if d >= DPRIME_MAX:
        return None
    pc = pc_from_dprime(d, method=method)
    slope = pc_slope(d, method=method)
    if slope <= 1e-12:
        return None
    return float(pc * (1.0 - pc) / slope**2)


@dataclass(frozen=True, slots=True)
class DprimeResult(Record):
    """A conversion between proportion correct and d'.

    ``capped`` is True where ``dprime`` is the cap ``DPRIME_MAX`` (a lower bound).
    ``model`` names the psychometric function used; ``note`` explains any convention
    that applied (d' floored at 0, capped, the 2-AFC model for preference).
    """

    method: str
    pc: float
    dprime: float
    guess: float
    model: str
    capped: bool
    note: str


def dprime_conversion(*, method: str, pc: float | None = None,
                      dprime: float | None = None) -> DprimeResult:
    """Convert a proportion correct to d', or d' to a proportion correct.

    Parameters
    ----------
    method : str
        A forced-choice method of the registry.
    pc : float, optional
        Proportion correct in [0, 1].
    dprime : float, optional
        d' >= 0. Give exactly one of ``pc`` and ``dprime``.

    Returns
    -------
    DprimeResult
        ``method pc dprime`` with the guessing probability, the model and notes.

    Notes
    -----
    Psychometric functions of Frijters (1979), Ennis (1993) and Ennis and Jesionka
    (2011); see the module docstring. ``pc`` at or below chance gives d' = 0; ``pc``
    at or above ``pc(15)`` gives d' = 15 flagged as capped.

    References
    ----------
    Ennis, D. M. (1993). The power of sensory discrimination methods. J. Sensory Stud.
    8:353-370.
    """
    if (pc is None) == (dprime is None):
        raise TrialsError(f"give exactly one of pc or dprime (got pc={pc!r}, dprime={dprime!r})")
    model = model_name(method)
    guess = _guess(method)
    notes = [_PREFERENCE_NOTE] if get_method(method).family is Family.PREFERENCE else []
    if pc is not None:
        if not (0.0 <= pc <= 1.0):
            raise TrialsError(f"pc must lie in [0, 1], got {pc!r}")
        d = dprime_from_pc(pc, method=method)
        if pc <= guess:
            notes.append(f"pc {pc!r} is at or below chance ({guess:.4g}): d' set to 0")
        out_pc = float(pc)
    else:
        assert dprime is not None  # exactly one of pc and dprime was given (checked above)
        if not np.isfinite(dprime) or dprime < 0:
            raise TrialsError(f"d' must be a finite number >= 0, got {dprime!r}")
        d = min(float(dprime), DPRIME_MAX)
        if dprime > DPRIME_MAX:
            notes.append(f"d' {dprime!r} above the cap {DPRIME_MAX}: computed at the cap")
        out_pc = pc_from_dprime(d, method=method)
    capped = d >= DPRIME_MAX
    if capped and pc is not None:
        notes.append(f"pc at or above pc(d'={DPRIME_MAX}): d' reported at the cap (a lower bound)")
    return DprimeResult(method=method, pc=out_pc, dprime=float(d), guess=guess, model=model,
                        capped=bool(capped), note="; ".join(notes))
