"""What the power figures are made of: one element's worst case (:class:`ElementPower`), an array
of them (:class:`ArrayPower`), the sequence of both (:class:`ElementPowers`) and the network's
totals. Shared by :mod:`.power` (per element) and :mod:`.power_arrays` (array-held elements),
so neither imports the other's internals.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..network import BlockSequence, Network


@dataclass
class ElementPower:
    """Worst case of one dissipating element.

    Attributes
    ----------
    name : str
        Part id, ``switch:<leg id>``, ``ref_r`` or ``load``.
    kind : str
        ``"part"``, ``"switch"``, ``"reference"`` or ``"load"``.
    power_max : float
        Largest power over all codes, watts.
    power_code : int
        The code where it happens.
    current_max : float
        Largest |current| over all codes, amperes.
    source_max, sink_max : float
        Switches only: largest current the switch sources from its high rail into the leg, and
        sinks from the leg into its low rail, amperes (0 for other elements).
    """

    name: str
    kind: str
    power_max: float
    power_code: int
    current_max: float
    source_max: float = 0.0
    sink_max: float = 0.0


@dataclass
class ArrayPower:
    """Worst case of the elements ``f"{prefix}{i}"`` of an array (fields as in
    :class:`ElementPower`, each an array of shape (m,))."""

    prefix: str
    kind: str
    power_max: np.ndarray
    power_code: np.ndarray
    current_max: np.ndarray
    source_max: np.ndarray | None = None
    sink_max: np.ndarray | None = None

    @property
    def size(self) -> int:
        """Number of elements m."""
        return int(self.power_max.shape[0])

    def element(self, i: int):
        """Element ``i`` as an :class:`ElementPower`."""
        return ElementPower(f"{self.prefix}{i}", self.kind, float(self.power_max[i]),
                            int(self.power_code[i]), float(self.current_max[i]),
                            0.0 if self.source_max is None else float(self.source_max[i]),
                            0.0 if self.sink_max is None else float(self.sink_max[i]))


class ElementPowers(BlockSequence):
    """Worst-case elements in display order: plain ``ElementPower`` entries and
    :class:`ArrayPower` blocks, read as one sequence (block entries made on demand)."""


def totals(net: Network, total: np.ndarray, fed: np.ndarray, iref) -> dict[str, float]:
    """The totals of ``power.worst_case`` from per-code arrays (shape (n_codes,))."""
    p_ref = net.fixed[net.source] * np.asarray(iref, dtype=float)
    k = int(np.argmax(total))
    j = int(np.argmax(np.abs(p_ref)))
    return {"power_total_max": float(total[k]), "power_total_max_code": k,
            "ref_power_max": float(abs(p_ref[j])), "ref_power_max_code": j,
            "balance_error_max": float(np.max(np.abs(p_ref - fed)))}
