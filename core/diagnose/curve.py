"""Linearity of a measured curve that may skip codes (IEEE Std 1658 terms, IEEE Std 1241 lines).

With every code measured these are exactly the definitions of :mod:`rungwise.core.metrics.
linearity` (a test checks). With codes missing, the rules are:

* **Endpoint line** through the lowest and the highest *measured* code; endpoint LSB = its slope
  (volts per code). INL(c) = (V(c) − line(c)) / LSB at each measured code.
* **Best-fit line**: least squares over the measured codes, each code once (the mean of its
  repeats); INL in units of the fitted slope.
* **DNL** is given at each measured code but the last, for the step to the next measured code,
  normalised per code step: DNL_j = (V(c_{j+1}) − V(c_j)) / (LSB · (c_{j+1} − c_j)) − 1 — the mean
  DNL of the codes the step spans (``dnl_span`` of them). Across a gap one bad code can hide in
  the mean; with no gap it is the ordinary DNL.
* **Monotonic** ⇔ every step between consecutive measured codes goes the way of full scale (a zero
  step counts). A non-monotonic step inside a gap cannot be seen.
* **Offset error** = the endpoint line at code 0 minus the ideal output at code 0 (= V(0) − ideal
  V(0) when code 0 is measured); **gain error** = endpoint LSB / ideal LSB − 1, and × (2^N − 1) in
  LSB at full scale.
* An inverting curve (full scale below zero) is measured on −V, as in the project's metrics.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .reading import MeasurementError

MIN_LSB = 1e-12
"""Smallest endpoint step per code accepted, volts (below it the outputs do not really change)."""


@dataclass(frozen=True, eq=False)
class CurveLinearity:
    """Linearity of one curve at its measured codes.

    Attributes
    ----------
    codes : ndarray of int, shape (n,)
    inl_endpoint, inl_bestfit : ndarray, shape (n,), LSB
    dnl : ndarray, shape (n − 1,), LSB — step j is from ``codes[j]`` to ``codes[j + 1]``
    dnl_span : ndarray of int, shape (n − 1,) — codes each DNL step spans (1 without a gap)
    monotonic : bool
    lsb : float — endpoint slope, volts per code (negative for an inverting output)
    bestfit_offset, bestfit_slope : float — volts, volts per code
    offset_error : float — volts
    gain_error : float — fraction; ``gain_error_lsb`` the same at full scale, LSB
    """

    codes: np.ndarray
    inl_endpoint: np.ndarray
    inl_bestfit: np.ndarray
    dnl: np.ndarray
    dnl_span: np.ndarray
    monotonic: bool
    lsb: float
    bestfit_offset: float
    bestfit_slope: float
    offset_error: float
    gain_error: float
    gain_error_lsb: float

    @property
    def max_abs_dnl(self) -> float:
        """Largest |DNL|, LSB (0 for a single step-less curve)."""
        return float(np.max(np.abs(self.dnl))) if self.dnl.size else 0.0


def curve_linearity(codes: np.ndarray, volts: np.ndarray, ideal_lsb: float, n_codes: int
                    ) -> CurveLinearity:
    """INL, DNL, monotonicity, offset and gain error of a curve measured at some codes.

    Parameters
    ----------
    codes : ndarray of int, shape (n,)
        Measured codes, ascending, distinct, n ≥ 2.
    volts : ndarray, shape (n,), volts
    ideal_lsb : float
        The design's ideal step, volts (negative when inverting); ideal V(0) is 0.
    n_codes : int
        2^N, for the gain error at full scale.

    Raises
    ------
    MeasurementError
        Fewer than two codes, or equal outputs at the lowest and highest measured code.
    """
    c = np.asarray(codes, dtype=np.int64)
    v = np.asarray(volts, dtype=float)
    if c.size < 2:
        raise MeasurementError("at least two different codes must be measured")
    span = c[-1] - c[0]
    lsb = float((v[-1] - v[0]) / span)
    if abs(lsb) < MIN_LSB:
        raise MeasurementError(f"the outputs at codes {c[0]} and {c[-1]} are equal (within "
                               f"{MIN_LSB:g} V per code): no endpoint line (is the converter "
                               "connected?)")
    sign = 1.0 if lsb > 0 else -1.0
    vo = v * sign
    lsb_o = abs(lsb)
    inl_e = (vo - vo[0] - lsb_o * (c - c[0])) / lsb_o
    cf = c.astype(float)
    cm = cf.mean()
    slope = float(np.dot(cf - cm, vo - vo.mean()) / np.dot(cf - cm, cf - cm))
    if not slope > 0.0:
        raise MeasurementError("the outputs do not rise with the code on average (the best-fit "
                               "line is flat or falls): is this the converter's output?")
    offset = float(vo.mean() - slope * cm)
    inl_b = (vo - offset - slope * cf) / slope
    steps = np.diff(vo)
    gaps = np.diff(c)
    dnl = steps / (lsb_o * gaps) - 1.0
    line0 = float(v[0] - lsb * c[0])
    gain_error = lsb / ideal_lsb - 1.0 if ideal_lsb else float("nan")
    return CurveLinearity(
        codes=c, inl_endpoint=inl_e, inl_bestfit=inl_b, dnl=dnl, dnl_span=gaps,
        monotonic=bool(np.all(steps >= 0)), lsb=lsb, bestfit_offset=sign * offset,
        bestfit_slope=sign * slope, offset_error=line0, gain_error=gain_error,
        gain_error_lsb=gain_error * (n_codes - 1),
    )


def pooled_noise(spread: np.ndarray, count: np.ndarray) -> float:
    """Pooled standard deviation of repeated readings, volts; NaN when no code was repeated.

    σ² = Σ (n_i − 1)·s_i² / Σ (n_i − 1) over codes read more than once.
    """
    rep = count > 1
    dof = float(np.sum(count[rep] - 1))
    if dof == 0:
        return float("nan")
    return float(np.sqrt(np.sum((count[rep] - 1) * spread[rep] ** 2) / dof))
