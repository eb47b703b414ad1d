"""IEC 60063 preferred-number series E3 … E192 and nearest-value snapping by ratio.

Our own tables, checked by tests against IEC 60063:2015 Tables 1 and 2: E3 … E24 are listed
(their values are not all the rounding of 10^(i/n)); E48, E96 and E192 are the three-digit
rounding of 10^(i/n), with the single exception 9.20 in E192 (the formula gives 9.19).
Values span the decades from 1 Ω to 10 MΩ.
"""

from __future__ import annotations

from functools import cache

import numpy as np

from ..errors import DesignError
from ..types import SERIES

_E24 = (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
        3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1)

TOLERANCE: dict[str, float] = {"E3": 0.4, "E6": 0.2, "E12": 0.1, "E24": 0.05, "E48": 0.02,
                               "E96": 0.01, "E192": 0.005}
"""Usual tolerance grade of each series, ± fraction (common practice; E192 also comes tighter)."""

LOWEST_OHMS = 1.0
"""Smallest preferred value offered, ohms."""

HIGHEST_OHMS = 10e6
"""Largest preferred value offered, ohms."""


def mantissas(series: str) -> np.ndarray:
    """The series' values in one decade, 1 ≤ m < 10.

    Returns
    -------
    ndarray, shape (n,)
        n = 3, 6, …, 192 values in increasing order.

    Raises
    ------
    DesignError
        ``series`` is not E3 … E192 (``"series"`` named).
    """
    if series not in SERIES or series == "exact":
        raise DesignError("series", f"unknown series {series!r}; choose one of " + ", ".join(SERIES))
    n = int(series[1:])
    if n <= 24:
        return np.array(_E24[:: 24 // n])
    values = np.round(10.0 ** (np.arange(n) / n), 2)
    if n == 192:
        values[values == 9.19] = 9.20
    return values


def values(series: str) -> np.ndarray:
    """Every preferred value of ``series`` from 1 Ω to 10 MΩ, ohms, increasing, shape (n·7 + 1,)."""
    return _values(series).copy()


@cache
def _values(series: str) -> np.ndarray:
    m = mantissas(series)
    decades = 10.0 ** np.arange(7)
    all_values = (decades[:, None] * m[None, :]).ravel()
    return np.round(np.append(all_values, HIGHEST_OHMS), 9)


def snap(ohms: np.ndarray | float, series: str, field: str = "series") -> np.ndarray:
    """Nearest preferred value by ratio (log distance); a tie goes to the larger value.

    Parameters
    ----------
    ohms : float or ndarray, any shape, ohms
    series : str
        ``"exact"`` returns ``ohms`` unchanged; otherwise E3 … E192.
    field : str
        Named in the error when a value lies outside the preferred-value decades.

    Returns
    -------
    ndarray, same shape, ohms

    Raises
    ------
    DesignError
        A value is below 1 Ω or above 10 MΩ by more than half a step of the series.
    """
    x = np.asarray(ohms, dtype=float)
    if series == "exact":
        return x.copy()
    table = _values(series)
    logs = _logs(series)
    step = logs[1] - logs[0]
    lx = np.log(x)
    if np.any(lx < logs[0] - step / 2) or np.any(lx > logs[-1] + step / 2):
        bad = float(x[(lx < logs[0] - step / 2) | (lx > logs[-1] + step / 2)].flat[0])
        raise DesignError(field, f"{bad:.6g} Ω lies outside the {series} values offered "
                          f"(1 Ω … 10 MΩ); choose another unit_r, a build style of units, or "
                          "series = exact")
    hi = np.minimum(np.maximum(np.searchsorted(logs, lx), 1), len(logs) - 1)
    lo = hi - 1
    pick_hi = (logs[hi] - lx) <= (lx - logs[lo]) + 1e-12
    return np.where(pick_hi, table[hi], table[lo])


@cache
def _logs(series: str) -> np.ndarray:
    return np.log(_values(series))
