"""Figures of merit computed from solved networks (linearity, structure)."""
