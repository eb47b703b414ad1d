"""Rungwise numeric core: resistor-network DACs solved exactly for every code (no Qt here).

Public API::

    from rungwise.core import Design, evaluate
    ev = evaluate(Design(topology="r2r-voltage", bits=8, vref=3.3, unit_r=10e3))
    ev.vout, ev.inl_endpoint, ev.summary["max_abs_dnl"]

    from rungwise.core import search          # cheapest design meeting the targets
    result = search(Design(bits=10))          # SearchResult: .answer, .front(), .why_lost(), .to_dict()
"""

from .design import FIELDS, Design
from .errors import DesignError, NetworkError, RungwiseError
from .evaluate import SUMMARY_KEYS, Evaluation, evaluate
from .montecarlo import iter_monte_carlo, monte_carlo
from .space_search import iter_search, search
from .stats_result import MonteCarloResult, YieldFigure
from .types import OUTPUTS_BY_TOPOLOGY, TOPOLOGIES

__all__ = [
    "FIELDS",
    "OUTPUTS_BY_TOPOLOGY",
    "SUMMARY_KEYS",
    "TOPOLOGIES",
    "Design",
    "DesignError",
    "Evaluation",
    "MonteCarloResult",
    "NetworkError",
    "RungwiseError",
    "YieldFigure",
    "evaluate",
    "iter_monte_carlo",
    "iter_search",
    "monte_carlo",
    "search",
]
