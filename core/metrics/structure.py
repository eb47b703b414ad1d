"""Part-count figures of a network: resistors, switches, amplifiers, distinct values, spread."""

from __future__ import annotations

import numpy as np

from ..network import Network, PartList


def distinct_values(ohms: np.ndarray, rel_tol: float = 1e-9) -> int:
    """Number of different resistances, treating values within ``rel_tol`` as equal."""
    if ohms.size == 0:
        return 0
    v = np.sort(np.asarray(ohms, float))
    new = np.diff(v) > rel_tol * v[1:]
    return int(1 + np.count_nonzero(new))


def structure(net: Network, unit_r: float) -> dict[str, float | int]:
    """Counts and spread of the network's resistors (feedback included), as summary entries.

    Returns ``n_resistors`` (physical resistors: a part built of units counts each unit),
    ``n_switches``, ``n_amplifiers``, ``n_distinct_values``, ``spread`` (largest/smallest physical
    resistor) and ``total_r_units`` (sum of all physical resistances in units of ``unit_r``).
    """
    parts = PartList.of(net.parts)
    ohms, units = parts.unit_ohms(), parts.units()
    return {
        "n_resistors": int(units.sum()),
        "n_switches": int(net.counts.get("switches", 0)),
        "n_amplifiers": int(net.counts.get("amplifiers", 0)),
        "n_distinct_values": distinct_values(ohms),
        "spread": float(ohms.max() / ohms.min()) if ohms.size else 1.0,
        "total_r_units": float((ohms * units).sum() / unit_r),
    }
