"""Single-pole settling of an unbuffered output loaded by a capacitance.

The network is resistive, so a capacitance C at its output node (``load_c`` plus
``timing.node_c``) makes one pole with τ = R_th·C, R_th the output's Thevenin resistance
(``rout`` in parallel with ``load_r`` when that is finite). Convention: the worst code's R_th,
and the time to come within ½ LSB of the final value after a full-scale step of (2^N − 1) LSB,
t = τ·ln(2·(2^N − 1)). (``metrics/glitch.py`` solves every transition exactly, every node's
capacitance and the switches' edges included.)

Outputs behind an ideal amplifier (buffer, virtual ground) settle as fast as the amplifier
allows, which is not modelled: their settling figures are NaN.
"""

from __future__ import annotations

import math

import numpy as np

from ..network import Network

CONVENTION = "τ·ln(2·(2^N − 1)): ½ LSB after a full-scale step, worst-code output resistance"
"""How the settling figure is defined, shown beside it."""


def output_capacitance(design) -> float:
    """Capacitance at the output node, F: ``load_c`` plus the timing table's ``node_c``."""
    return float(design.load_c) + float(design.timing.get("node_c", 0.0))


def time_constant(net: Network, rout: np.ndarray, load_c: float) -> float:
    """τ = worst-code R_th × ``load_c``, seconds (NaN behind an amplifier)."""
    o = net.output
    if o.kind != "node" or o.buffered:
        return math.nan
    return float(np.max(o.with_load(rout))) * load_c


def settling_time(tau: float, n_codes: int) -> float:
    """Time to ½ LSB after a full-scale step of (n_codes − 1) LSB, seconds: τ·ln(2·(n_codes − 1))."""
    if n_codes < 2:
        return 0.0
    return tau * math.log(2.0 * (n_codes - 1))
