"""The real-part figures ``evaluate`` adds: power, settling and noise summary entries and each
part's worst-case power (kept apart from ``evaluate.py`` so that file stays small)."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..metrics import amplifier, noise, settling
from ..metrics.drift import drift
from ..metrics.power import ElementPower, worst_case
from ..metrics.power_arrays import switch_maxima
from ..network import Network
from ..solution import Solution
from .board import board_value


def part_figures(design: Any, net: Network, sol: Solution,
                 powers: tuple[list[ElementPower], dict[str, float]] | None = None,
                 nominal_inl: np.ndarray | None = None
                 ) -> tuple[dict[str, Any], list[ElementPower]]:
    """Summary entries (labels in :mod:`..figure_registry`; the ``amp_`` ones only where the output
    has an amplifier) and every element's worst-case power.

    Parameters
    ----------
    design : Design
        Gives ``load_c``, ``temperature_c`` and ``bandwidth``.
    net : Network
        The nominal network (values already snapped).
    sol : Solution
        Its nominal solution, shape (n_codes,).
    powers : (elements, totals), optional
        The worst-case powers when already folded while solving (``metrics.power.PowerFold``).
    nominal_inl : ndarray, shape (n_codes,), optional
        The nominal endpoint INL when already computed (the amplifier figures reuse it).
    """
    elements, totals = powers if powers is not None else worst_case(net, sol)
    sw_current, sw_source, sw_sink = switch_maxima(elements)
    tau = settling.time_constant(net, sol.rout, settling.output_capacitance(design))
    density = noise.output_density(net, sol.rout, design.temperature_c)
    worst = float(np.max(density))
    noise_rms = float(noise.rms(worst, design.bandwidth, tau))
    lsb = abs(net.ideal_lsb)
    out = {
        "power_total_max": totals["power_total_max"],
        "power_total_max_code": totals["power_total_max_code"],
        "ref_power_max": totals["ref_power_max"],
        "switch_current_max": sw_current,
        "switch_source_max": sw_source,
        "switch_sink_max": sw_sink,
        "settling_tau": tau,
        "settling_time": settling.settling_time(tau, net.n_codes),
        "noise_density": worst,
        "noise_rms": noise_rms,
        "noise_rms_lsb": noise_rms / lsb if lsb else float("nan"),
    }
    range_c = [board_value(design, "temp_low_c"), board_value(design, "temp_high_c")]
    ends = drift(design, net, range_c, nominal_vout=sol.vout)
    out["drift_low_c"], out["drift_high_c"] = (float(t) for t in range_c)
    for i, end in enumerate(("low", "high")):
        out[f"drift_gain_error_{end}"] = float(ends.gain_error[i])
        out[f"drift_offset_{end}"] = float(ends.offset_error[i])
        out[f"drift_inl_{end}"] = float(ends.max_abs_inl[i])
    out.update(_amplifier_entries(design, net, sol, nominal_inl))
    return out, elements


def _amplifier_entries(design: Any, net: Network, sol: Solution,
                       nominal_inl: np.ndarray | None = None) -> dict[str, Any]:
    """Amplifier figures (none when the output has no amplifier)."""
    if not amplifier.has_amplifier(net):
        return {}
    eff = amplifier.apply(net, sol.vout, sol.rout, *(board_value(design, k) for k in (
        "amp_offset", "amp_open_loop", "rail_low", "rail_high")), nominal_inl=nominal_inl)
    return {"amp_offset_error": eff.offset_error, "amp_gain_error": eff.gain_error,
            "amp_inl_added": eff.inl_added, "amp_codes_clipped": eff.codes_clipped}
