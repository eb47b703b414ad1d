"""Rungwise application layer: the command line and the Qt window (Qt imported lazily)."""
