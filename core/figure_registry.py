"""The one registry of figures: every summary and statistics figure's key, label, unit and which
direction is better. Every surface (window table, command line, exports, report, sweeps) reads
labels and units from here; a module that adds a figure registers it here, in display order.

Labels starting with two spaces belong to the figure above them (``"  at code"``). Units follow
:mod:`rungwise.core.formatting` (``"fraction"`` is shown in %). ``better`` says how the window marks
the best candidate in a row: ``"smallest"``, ``"smallest_abs"`` (closest to zero), ``"largest"``,
``"yes"``, or ``None`` when the row is shown but not judged (an LSB, the code where an extreme
occurs, the lowest output resistance — the largest sets the loading error).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

Better = Literal["smallest", "smallest_abs", "largest", "yes"]
"""How the best value of a figure is chosen."""


@dataclass(frozen=True)
class Figure:
    """One figure: ``key`` (JSON, CSV, design files), ``label`` (on screen), ``unit``, ``better``."""

    key: str
    label: str
    unit: str = ""
    better: Better | None = None


SUMMARY: tuple[Figure, ...] = (
    # the nominal solution (evaluate)
    Figure("ideal_lsb", "Ideal LSB", "V"),
    Figure("ideal_full_scale", "Ideal full scale", "V"),
    Figure("lsb", "Endpoint LSB", "V"),
    Figure("full_scale", "Full scale (last code)", "V"),
    Figure("offset_error", "Offset error", "V", "smallest_abs"),
    Figure("gain_error", "Gain error", "fraction", "smallest_abs"),
    Figure("gain_error_lsb", "Gain error at full scale", "LSB", "smallest_abs"),
    Figure("max_abs_inl_endpoint", "Max |INL|, endpoint", "LSB", "smallest"),
    Figure("max_abs_inl_bestfit", "Max |INL|, best fit", "LSB", "smallest"),
    Figure("max_abs_dnl", "Max |DNL|", "LSB", "smallest"),
    Figure("monotonic", "Monotonic", "", "yes"),
    # the worst-case monotonic guarantee (worst_case)
    Figure("guaranteed_monotonic", "Monotonic on every board within tolerance", "", "yes"),
    Figure("worst_case_min_step", "  smallest step of any such board", "LSB", "largest"),
    Figure("worst_case_transition", "  at the step into code", ""),
    # the series ratio for monotonic by design (skew; added by the command line)
    Figure("series_ratio_for_monotonic", "Series ratio for monotonic by design", "×"),
    Figure("skew_max_abs_inl", "  its max |INL|, endpoint", "LSB"),
    Figure("skew_gain_error", "  its gain error", "fraction"),
    # the nominal solution, continued
    Figure("rout_min", "Output resistance, min", "Ω"),
    Figure("rout_min_code", "  at code", ""),
    Figure("rout_max", "Output resistance, max", "Ω", "smallest"),
    Figure("rout_max_code", "  at code", ""),
    Figure("iref_min", "Reference current, min", "A"),
    Figure("iref_min_code", "  at code", ""),
    Figure("iref_max", "Reference current, max", "A", "smallest_abs"),
    Figure("iref_max_code", "  at code", ""),
    Figure("n_resistors", "Resistors", "", "smallest"),
    Figure("n_distinct_values", "Distinct values", "", "smallest"),
    Figure("spread", "Resistance spread", "×", "smallest"),
    Figure("total_r_units", "Total resistance", "R", "smallest"),
    Figure("n_switches", "Switches", "", "smallest"),
    Figure("n_amplifiers", "Amplifiers", "", "smallest"),
    # power, switches, settling, noise, drift, amplifier (parts.figures)
    Figure("power_total_max", "Power in the network, max", "W"),
    Figure("power_total_max_code", "  at code", ""),
    Figure("ref_power_max", "Reference power, max", "W"),
    Figure("switch_current_max", "Switch current, max", "A"),
    Figure("switch_source_max", "  sourced from the high rail", "A"),
    Figure("switch_sink_max", "  sunk into the low rail", "A"),
    Figure("settling_tau", "Output time constant", "s"),
    Figure("settling_time", "Settling to ½ LSB", "s"),
    Figure("noise_density", "Thermal noise density, worst code", "V/√Hz"),
    Figure("noise_rms", "Thermal noise over the bandwidth, through the output pole", "V"),
    Figure("noise_rms_lsb", "  relative to the LSB", "LSB"),
    Figure("drift_low_c", "Cold end of the temperature range", "°C"),
    Figure("drift_high_c", "Hot end of the temperature range", "°C"),
    Figure("drift_gain_error_low", "Gain error at the cold end", "fraction"),
    Figure("drift_gain_error_high", "Gain error at the hot end", "fraction"),
    Figure("drift_offset_low", "Offset at the cold end", "V"),
    Figure("drift_offset_high", "Offset at the hot end", "V"),
    Figure("drift_inl_low", "Max |INL| at the cold end", "LSB"),
    Figure("drift_inl_high", "Max |INL| at the hot end", "LSB"),
    Figure("amp_offset_error", "Amplifier: offset error", "V"),
    Figure("amp_gain_error", "Amplifier: gain error", "fraction"),
    Figure("amp_inl_added", "Amplifier: INL added", "LSB"),
    Figure("amp_codes_clipped", "Amplifier: codes beyond the rails", ""),
    # transitions and the test sine (metrics.dynamics)
    Figure("glitch_major", "Glitch impulse, major carry", "V·s", "smallest_abs"),
    Figure("glitch_peak_major", "Glitch peak, major carry", "V", "smallest"),
    Figure("glitch_peak_major_lsb", "  relative to the LSB", "LSB", "smallest"),
    Figure("settling_major", "Settling to ½ LSB, major carry", "s", "smallest"),
    Figure("glitch_worst", "Glitch impulse, largest", "V·s", "smallest_abs"),
    Figure("glitch_worst_code", "  at transition", ""),
    Figure("settling_worst", "Settling to ½ LSB, slowest transition", "s", "smallest"),
    Figure("settling_worst_code", "  at transition", ""),
    Figure("settling_full_scale", "Settling to ½ LSB, full-scale step", "s", "smallest"),
    Figure("sfdr_db", "SFDR, test sine", "dB", "largest"),
    Figure("thd_db", "THD, test sine", "dB", "smallest"),
    Figure("sinad_db", "SINAD, test sine", "dB", "largest"),
    Figure("enob", "ENOB, test sine", "bits", "largest"),
)
"""Figures of a nominal evaluation (``Evaluation.summary``), in display order."""

YIELDS: tuple[Figure, ...] = (
    Figure("yield_monotonic", "Yield, monotonic", "fraction", "largest"),
    Figure("yield_dnl", "Yield, |DNL| within limit", "fraction", "largest"),
    Figure("yield_inl", "Yield, |INL| within limit", "fraction", "largest"),
    Figure("yield_all", "Yield, all targets", "fraction", "largest"),
)
"""Monte Carlo yields (fraction of boards that pass), in display order."""

FIGURES: dict[str, Figure] = {f.key: f for f in (*SUMMARY, *YIELDS)}
"""Every registered figure by key."""


def labels_and_units(figures: tuple[Figure, ...]) -> dict[str, tuple[str, str]]:
    """``{key: (label, unit)}`` of ``figures``, in their order."""
    return {f.key: (f.label, f.unit) for f in figures}


def figure(key: str) -> Figure:
    """The registered figure ``key``; an unregistered key reads as itself with no unit."""
    return FIGURES.get(key) or Figure(key, key)
