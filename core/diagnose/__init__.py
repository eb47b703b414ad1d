"""Diagnose a built converter from its measured transfer curve (no Qt here).

``read_measurement(path)`` → :class:`Measurement`; ``diagnose(measurement, design)`` →
:class:`Diagnosis` with linearity at the measured codes, per-bit weights, the parts ranked by how
well their deviation explains the curve, an as-built design and a firmware correction table.
"""

from .bit_weights import BitFit, fit_bit_weights
from .correction import CorrectionTable, correction_table, to_c_header, to_csv
from .curve import CurveLinearity, curve_linearity, pooled_noise
from .diagnosis import Diagnosis, diagnose, missing_codes
from .reading import Measurement, MeasurementError, parse_text, read_measurement
from .suspects import (
    DiagnosisCancelled,
    Suspect,
    SuspectFit,
    as_built,
    fit_suspects,
    trial_curves,
)

__all__ = [
    "BitFit",
    "CorrectionTable",
    "CurveLinearity",
    "Diagnosis",
    "DiagnosisCancelled",
    "Measurement",
    "MeasurementError",
    "Suspect",
    "SuspectFit",
    "as_built",
    "correction_table",
    "curve_linearity",
    "diagnose",
    "fit_bit_weights",
    "fit_suspects",
    "missing_codes",
    "parse_text",
    "pooled_noise",
    "read_measurement",
    "to_c_header",
    "to_csv",
    "trial_curves",
]
