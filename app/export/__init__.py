"""Exports without Qt: summary tables in several formats and the design-review report content."""
