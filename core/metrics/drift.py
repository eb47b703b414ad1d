"""Temperature drift: the network solved at the ends of a temperature range.

Each part follows R(T) = R0·(1 + α(T − T0)) with the statistics' coefficients (``mismatch.tempco``
for every part, ``mismatch.tempco_parts`` per part, T0 = ``mismatch.reference_c``), so parts from
different batches (legs and series, say) can drift differently. Equal coefficients leave a
ratio-metric network's transfer unchanged; only the differences show.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..mismatch import MismatchModel, temperature_factor
from ..network import Network, PartList
from ..solve import solve
from . import linearity


@dataclass
class DriftResult:
    """The network at several temperatures.

    Attributes
    ----------
    temperatures_c : ndarray, shape (n_temps,), °C
    vout : ndarray, shape (n_temps, n_codes), volts
    offset_error : ndarray, shape (n_temps,), volts — V(0) − ideal V(0)
    gain_error : ndarray, shape (n_temps,), fraction — endpoint slope / ideal LSB − 1
    max_abs_inl : ndarray, shape (n_temps,), endpoint LSB
    """

    temperatures_c: np.ndarray
    vout: np.ndarray
    offset_error: np.ndarray
    gain_error: np.ndarray
    max_abs_inl: np.ndarray


def part_ohms_at(design: Any, net: Network, temperatures_c: np.ndarray) -> dict[str, np.ndarray]:
    """Every part's value at each temperature.

    Returns
    -------
    dict part id → ndarray, shape (n_temps, 1), ohms
    """
    base = MismatchModel.of(design)
    models = [dataclasses.replace(base, temperature_c=float(t)) for t in temperatures_c]
    own = base.tempco_parts
    # parts without their own coefficient share one factor per temperature (one array, not one
    # temperature_factor call per part: strings have 65,536 parts)
    common = np.array([1.0 + m.tempco * (m.temperature_c - m.reference_c) for m in models])[:, None]
    parts = PartList.of(net.parts)
    ohms = parts.ohms()
    scaled = ohms[:, None, None] * common  # (n_parts, n_temps, 1)
    return {pid: (ohms[i] * np.array([temperature_factor(m, pid) for m in models])[:, None]
                  if pid in own else scaled[i])
            for i, pid in enumerate(parts.ids())}


def any_part_drifts(design: Any, temperatures_c: np.ndarray) -> bool:
    """Whether any part's value changes at any of the temperatures (a coefficient not zero)."""
    base = MismatchModel.of(design)
    models = [dataclasses.replace(base, temperature_c=float(t)) for t in temperatures_c]
    if any(m.tempco * (m.temperature_c - m.reference_c) != 0 for m in models):
        return True
    return any(temperature_factor(m, pid) != 1.0 for m in models for pid in base.tempco_parts)


def drift(design: Any, net: Network, temperatures_c: np.ndarray | list[float],
          nominal_vout: np.ndarray | None = None) -> DriftResult:
    """Solve ``net`` with its parts at each temperature (one batched solve).

    Parameters
    ----------
    design : Design
        Gives the temperature coefficients.
    net : Network
        Nominal values (as built and snapped).
    temperatures_c : sequence of float, °C
    nominal_vout : ndarray, shape (n_codes,), optional
        The nominal solution; reused (no solve) when no part changes value at any temperature
        (every coefficient zero).

    Returns
    -------
    DriftResult
        All NaN when a temperature takes a part to zero ohms or below (1 + α·ΔT ≤ 0).
    """
    temps = np.asarray(temperatures_c, dtype=float)
    feedback = None
    if nominal_vout is not None and not any_part_drifts(design, temps):
        v = np.broadcast_to(nominal_vout, (len(temps), nominal_vout.shape[-1]))
    else:
        ohms = part_ohms_at(design, net, temps)
        if any(np.any(np.asarray(x) <= 0) for x in ohms.values()):
            # the linear coefficient takes a part to zero or below: no physical value, figures NaN
            nan = np.full(temps.shape, np.nan)
            return DriftResult(temperatures_c=temps, vout=np.full((temps.size, net.n_codes), np.nan),
                               offset_error=nan, gain_error=nan.copy(), max_abs_inl=nan.copy())
        feedback = ohms.pop("feedback", None)
        v = solve(net, ohms=ohms, vout_only=True).vout
    if feedback is not None and net.output.kind == "virtual-ground":
        v = v * (feedback / net.output.feedback_ohms)
    ideal = net.ideal_lsb
    lsb = linearity.endpoint_lsb(v)
    return DriftResult(
        temperatures_c=temps,
        vout=v,
        offset_error=v[:, 0].copy(),
        gain_error=lsb / ideal - 1.0 if ideal else np.full(temps.shape, np.nan),
        max_abs_inl=np.nanmax(np.abs(linearity.inl_endpoint(v)), axis=-1),
    )
