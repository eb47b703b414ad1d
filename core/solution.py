"""What the solver returns (:class:`Solution`) and the check every solving path makes first.

A leaf module: the solver's dispatch (``solve``) and the tap-selector path (``selector``) both use
it, so neither imports the other's internals.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .errors import NetworkError
from .network import Network


@dataclass
class Solution:
    """Per-code results of one network.

    Attributes
    ----------
    vout : ndarray, shape batch = (n_codes,) or (n_trials, n_codes), volts
    rout : ndarray, same shape, ohms — Thevenin resistance at the output terminal, load excluded
        (for a virtual-ground output: the resistance the summing node sees).
    iref : ndarray, same shape, amperes — current delivered by the reference (positive sourcing).
    method : str
        ``"general"`` or ``"superposition"``.
    node_voltages : dict[str, ndarray]
        Every node's voltage (fixed ones included), same batch shape; filled when ``keep_nodes``.
    """

    vout: np.ndarray
    rout: np.ndarray
    iref: np.ndarray
    method: str
    node_voltages: dict[str, np.ndarray] = field(default_factory=dict)


def check_connected(net: Network, nodes: list[str]) -> None:
    """Raise :class:`NetworkError` naming a node with no path to a fixed node in any code."""
    links: dict[str, set[str]] = {name: set() for name in [*nodes, *net.fixed]}
    for r in net.resistors:
        links.setdefault(r.a, set()).add(r.b)
        links.setdefault(r.b, set()).add(r.a)
    for leg in [*net.legs, *net.groups]:
        for rail in (leg.high, leg.low):
            if rail is not None:
                links.setdefault(leg.node, set()).add(rail)
                links.setdefault(rail, set()).add(leg.node)
    reached = set(net.fixed)
    frontier = list(net.fixed)
    while frontier:
        cur = frontier.pop()
        for nxt in links.get(cur, ()):
            if nxt not in reached:
                reached.add(nxt)
                frontier.append(nxt)
    for name in nodes:
        if name not in reached:
            raise NetworkError(name, f"node '{name}' has no DC path to ground or a source "
                               "(a floating node): the network cannot be solved")
