"""Mismatch models: the design's ``mismatch`` table and how it turns into random part values.

Keys (all optional; defaults below)::

    mismatch = {
        model = "parts",            # "parts" | "on-chip" | "array"
        distribution = "gaussian",  # "uniform" | "gaussian"  (parts and array models)
        tolerance = 0.01,           # ±grade of each part; element-to-element for "array"
        coverage_sigma = 3,         # Gaussian: σ = tolerance / coverage_sigma
        shared_tolerance = 0.0,     # "array": ±error shared by every element of the array
        area_coefficient = 1e-8,    # "on-chip": A_R, fraction·m (1 %·µm = 1e-8)
        unit_width = 2e-6,          # "on-chip": W of a device of value unit_r, m
        unit_length = 20e-6,        # "on-chip": L of a device of value unit_r, m
        tempco = 0.0,               # α of every part, 1/K
        tempco_parts = {leg0 = 50e-6},  # α of single parts, 1/K
        reference_c = 25,           # temperature at which the values hold, °C (the operating
                                    #   temperature is the design's temperature_c)
    }

The yield limits are the review targets (``targets.Targets``), not part of this table.

Area law (Pelgrom, Duinmaijer, Welbers, IEEE JSSC 24(5), 1989): σ(ΔR/R) = A_R/√(W·L) for a pair,
so one device has A_R/√(2·W·L). A device of value R_d is drawn at width W and length L·R_d/unit_r
(area proportional to value). Temperature: R(T) = R0·(1 + α(T − T0)).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any, Literal, get_args

import numpy as np

from .build_style import unit_ohms
from .errors import DesignError
from .network import Network, PartArray, PartList
from .part_ids import part_ids
from .ranges import FRACTION, FieldSpec

MismatchModelName = Literal["parts", "on-chip", "array"]
"""Where the random errors come from: discrete parts, an on-chip area law, a matched array."""

Distribution = Literal["gaussian", "uniform"]
"""Shape of a tolerance grade's errors (the first is the default)."""


NUMERIC_SETTINGS: dict[str, FieldSpec] = {
    "tolerance": FieldSpec("Tolerance (±)", FRACTION, 0.0, 0.5, default=0.01),
    "coverage_sigma": FieldSpec("Tolerance covers ± this many σ", "σ", 0.5, 10.0, default=3.0),
    "shared_tolerance": FieldSpec("Shared array tolerance (±)", FRACTION, 0.0, 0.5, default=0.0),
    "area_coefficient": FieldSpec("Area coefficient A_R", "fraction·m", 0.0, 1e-5, default=1e-8),
    "unit_width": FieldSpec("Width W of a unit_r device", "m", 1e-9, 1e-2, default=2e-6),
    "unit_length": FieldSpec("Length L of a unit_r device", "m", 1e-9, 1e-2, default=20e-6),
    "tempco": FieldSpec("Temperature coefficient, every part", "1/K", -0.01, 0.01, default=0.0),
    "reference_c": FieldSpec("Reference temperature", "°C", -273.15, 1000.0, default=25.0),
}
"""Numeric ``mismatch`` keys with label, SI unit, default and allowed range."""

CHOICE_SETTINGS: dict[str, tuple[str, ...]] = {
    "model": get_args(MismatchModelName),
    "distribution": get_args(Distribution),
}
"""Option ``mismatch`` keys and their values; the first is the default."""

MISMATCH_KEYS = (*CHOICE_SETTINGS, *NUMERIC_SETTINGS, "tempco_parts")
"""Every key the ``mismatch`` table accepts."""


def check_mismatch(data: Mapping[str, Any], design: Any) -> dict[str, Any]:
    """The validated ``mismatch`` table of ``design`` (only the keys given, values parsed).

    Raises
    ------
    DesignError
        Named as ``mismatch.<key>`` (``mismatch.tempco_parts.<id>``) with the allowed range.
    """
    if not isinstance(data, Mapping):
        raise DesignError("mismatch", 'must be a table, e.g. {distribution = "uniform", tolerance = 0.01}')
    out: dict[str, Any] = {}
    for key, value in data.items():
        name = f"mismatch.{key}"
        if key in CHOICE_SETTINGS:
            if value not in CHOICE_SETTINGS[key]:
                raise DesignError(name, f"{value!r} is not allowed; choose one of "
                                  + ", ".join(CHOICE_SETTINGS[key]))
            out[key] = str(value)
        elif key in NUMERIC_SETTINGS:
            out[key] = NUMERIC_SETTINGS[key].check(name, value)
        elif key == "tempco_parts":
            out[key] = _check_tempcos(value, design)
        else:
            raise DesignError(name, "unknown mismatch key; known keys: " + ", ".join(MISMATCH_KEYS))
    return out


def _check_tempcos(value: Any, design: Any) -> dict[str, float]:
    if not isinstance(value, Mapping):
        raise DesignError("mismatch.tempco_parts", "must map part ids to 1/K, e.g. {leg0 = 50e-6}")
    known = part_ids(design.topology, design.output, design.bits, design.thermometer_bits,
                     design.build)
    spec = NUMERIC_SETTINGS["tempco"]
    out = {}
    for pid, alpha in value.items():
        name = f"mismatch.tempco_parts.{pid}"
        if pid not in known:
            raise DesignError(name, f"unknown part id for {design.topology} with {design.bits} bits")
        out[str(pid)] = spec.check(name, alpha)
    return out


@dataclass(frozen=True)
class MismatchModel:
    """Every ``mismatch`` setting of a design with its defaults filled in (see module docstring)."""

    model: str = "parts"
    distribution: str = "gaussian"
    tolerance: float = 0.01
    coverage_sigma: float = 3.0
    shared_tolerance: float = 0.0
    area_coefficient: float = 1e-8
    unit_width: float = 2e-6
    unit_length: float = 20e-6
    tempco: float = 0.0
    reference_c: float = 25.0
    tempco_parts: Mapping[str, float] = field(default_factory=dict)

    temperature_c: float = 27.0

    @classmethod
    def of(cls, design: Any) -> MismatchModel:
        """The full settings of ``design`` (validated already by ``Design``); ``temperature_c`` is
        the design's operating temperature."""
        return cls(**dict(design.mismatch), temperature_c=design.temperature_c)

    def describe(self) -> str:
        """One line for people, e.g. ``"parts ±1 %, gaussian (σ = tol/3)"``."""
        if self.model == "on-chip":
            return (f"on-chip area law, A_R = {self.area_coefficient * 1e8:g} %·µm, "
                    f"W×L = {self.unit_width * 1e6:g}×{self.unit_length * 1e6:g} µm per unit_r")
        shape = (f"gaussian (σ = tol/{self.coverage_sigma:g})" if self.distribution == "gaussian"
                 else "uniform")
        if self.model == "array":
            return (f"matched array: shared ±{self.shared_tolerance * 100:g} %, element "
                    f"±{self.tolerance * 100:g} %, {shape}")
        return f"parts ±{self.tolerance * 100:g} %, {shape}"


def area_law_sigma(area_coefficient: float, width: float, length: float, pair: bool = False) -> float:
    """σ(ΔR/R) of one device (or of a pair's difference when ``pair``) by the area law.

    Parameters
    ----------
    area_coefficient : float
        A_R, fraction·m.
    width, length : float
        Device size, m.

    Returns
    -------
    float
        Relative σ (fraction): A_R/√(W·L) for a pair, A_R/√(2·W·L) for one device.
    """
    area = width * length
    return area_coefficient / math.sqrt(area if pair else 2.0 * area)


# ------------------------------------------------------------------------------------------------
# sampling


def temperature_factor(model: MismatchModel, part_id: str) -> float:
    """R(T)/R0 = 1 + α(T − T0) for one part (dimensionless)."""
    alpha = model.tempco_parts.get(part_id, model.tempco)
    return 1.0 + alpha * (model.temperature_c - model.reference_c)


def nominal_ohms(design: Any, net: Network) -> dict[str, float]:
    """Every part's value at the design's temperature, ohms (no random error)."""
    model = MismatchModel.of(design)
    return {p.part_id: p.ohms * temperature_factor(model, p.part_id) for p in net.parts}


def _standard(rng: np.random.Generator, shape: tuple[int, int], distribution: str) -> np.ndarray:
    """Draws of unit size: N(0, 1) or U(−1, 1)."""
    if distribution == "uniform":
        return rng.uniform(-1.0, 1.0, shape)
    return rng.standard_normal(shape)


def sample_ohms(design: Any, net: Network, rng: np.random.Generator, n_trials: int
                ) -> dict[str, np.ndarray]:
    """Random values of every part (feedback included), unit by unit, combined per part.

    Parameters
    ----------
    design : Design
    net : Network
        ``build(design)``; its parts carry the build style's units.
    rng : numpy.random.Generator
    n_trials : int

    Returns
    -------
    dict part id → ndarray, shape (n_trials, 1), ohms
        Draw order: (array model) the shared error, then each part's units in ``net.parts`` order.
        Errors are drawn at unit size and scaled, so the same seed at another tolerance gives the
        same boards with scaled errors.
    """
    model = MismatchModel.of(design)
    if model.model == "on-chip":
        scale = 0.0
        distribution = "gaussian"
    else:
        scale = model.tolerance / (model.coverage_sigma if model.distribution == "gaussian" else 1.0)
        distribution = model.distribution
    shared = 0.0
    if model.model == "array":
        s_scale = model.shared_tolerance / (model.coverage_sigma if distribution == "gaussian" else 1.0)
        shared = s_scale * _standard(rng, (n_trials, 1), distribution)
    out: dict[str, np.ndarray] = {}
    for ids, unit, units, joined in _runs(net):  # one draw per run, the same order as part by part
        _sample_run(ids, unit, units, joined, design, model, rng, n_trials, scale, shared,
                    distribution, out)
    return out


def _runs(net: Network):
    """Runs of consecutive parts made alike — (ids, unit values Ω shape (k,), units, joined) —
    read from the part list's blocks, so a 65,536-part string is one run with no object per part."""
    pending: list = []  # (ids, unit values, units, joined) of the run being gathered
    for block in PartList.of(net.parts).blocks:
        if isinstance(block, PartArray):
            ids, unit = block.ids(), PartList([block]).unit_ohms()
            kind = (block.units, block.joined)
        else:
            ids, unit = (block.part_id,), np.array([unit_ohms(block)], dtype=float)
            kind = (block.units, block.joined)
        if pending and pending[-1][2:] == kind:
            pending[-1][0].extend(ids)
            pending[-1][1].append(unit)
        else:
            pending.append(([*ids], [unit], *kind))
    for ids, units_ohms, units, joined in pending:
        yield ids, np.concatenate(units_ohms), units, joined


def _sample_run(ids: list[str], unit: np.ndarray, units: int, joined: str, design: Any,
                model: MismatchModel, rng: np.random.Generator, n_trials: int, scale: float,
                shared: np.ndarray | float, distribution: str, out: dict[str, np.ndarray]) -> None:
    """Values of one run of parts made alike (``ids``, unit values ``unit``) into ``out`` (shape
    (n_trials, 1) each): one draw of shape (parts, n_trials, units), the same numbers as drawing
    part by part."""
    run = len(ids)
    if model.tempco_parts:
        factor = np.array([temperature_factor(model, pid) for pid in ids])
    else:
        factor = np.full(run, 1.0 + model.tempco * (model.temperature_c - model.reference_c))
    coef = unit * factor
    if model.model == "on-chip":
        sigma = np.array([area_law_sigma(model.area_coefficient, model.unit_width,
                                         model.unit_length * (u / design.unit_r)) for u in unit])
        err = sigma[:, None, None] * _standard(rng, (run, n_trials, units), distribution)
    else:
        err = scale * _standard(rng, (run, n_trials, units), distribution)
    values = coef[:, None, None] * (1.0 + shared + err)
    low = np.any(values <= 0, axis=(1, 2))
    if np.any(low):
        if model.model == "on-chip":
            raise DesignError("mismatch.area_coefficient", "the area law's spread drew a "
                              f"resistor at or below 0 Ω ({ids[int(np.argmax(low))]}); "
                              "lower the area coefficient or make the devices larger")
        raise DesignError("mismatch.tolerance", "the spread drew a resistor at or below 0 Ω; "
                          "lower the tolerance or use the uniform distribution")
    if joined == "parallel":
        combined = 1.0 / np.sum(1.0 / values, axis=2, keepdims=True)
    elif joined == "series":
        combined = np.sum(values, axis=2, keepdims=True)
    else:
        combined = values
    out.update(zip(ids, combined, strict=True))
