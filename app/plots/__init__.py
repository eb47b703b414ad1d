"""Plots drawn with Qt: the curves page, analysis-view styling, plot specs, painting and plot files."""
