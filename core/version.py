"""The installed program's version, for file headers, reports and netlists."""

from __future__ import annotations


def program_version() -> str:
    """The installed Rungwise version (``"unknown"`` when not installed)."""
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("rungwise")
    except PackageNotFoundError:  # pragma: no cover - running from a bare checkout
        return "unknown"
