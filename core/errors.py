"""Errors the core raises, worded for an engineer rather than a programmer."""

from __future__ import annotations


class RungwiseError(Exception):
    """Base class of every error the program reports to a person instead of a traceback."""


class DesignError(RungwiseError, ValueError):
    """A design field holds a value outside what the program accepts.

    Attributes
    ----------
    field : str
        The design key at fault (``"bits"``, ``"parts.leg3"`` …).
    """

    def __init__(self, field: str, message: str) -> None:
        super().__init__(f"{field}: {message}")
        self.field = field
        self.reason = message


class NetworkError(RungwiseError):
    """A network cannot be solved (for example a node with no DC path to a source or ground).

    Attributes
    ----------
    node : str
        Name of the node that makes the network unsolvable.
    """

    def __init__(self, node: str, message: str) -> None:
        super().__init__(message)
        self.node = node
