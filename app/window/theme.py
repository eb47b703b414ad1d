"""Light or dark: read the system palette and give the plots matching colours."""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtGui import QColor, QPalette


@dataclass(frozen=True)
class PlotColours:
    """Colours the plots use for one palette (``#rrggbb``)."""

    background: str
    foreground: str
    grid_alpha: float
    marker: str
    dark: bool


def is_dark(palette: QPalette) -> bool:
    """Whether ``palette`` is a dark one (light text on a dark window)."""
    return palette.color(QPalette.ColorRole.Window).lightness() < palette.color(
        QPalette.ColorRole.WindowText).lightness()


def plot_colours(palette: QPalette) -> PlotColours:
    """Plot background/foreground taken from the palette's base and text colours."""
    dark = is_dark(palette)
    return PlotColours(
        background=palette.color(QPalette.ColorRole.Base).name(),
        foreground=palette.color(QPalette.ColorRole.Text).name(),
        grid_alpha=0.22 if dark else 0.16,
        marker="#e06c6c" if dark else "#b83232",
        dark=dark,
    )


def dark_palette() -> QPalette:
    """A calm dark palette (used when the platform offers none, and for screenshots)."""
    p = QPalette()
    roles = {
        QPalette.ColorRole.Window: "#23272b", QPalette.ColorRole.WindowText: "#e3e6e8",
        QPalette.ColorRole.Base: "#1b1e21", QPalette.ColorRole.AlternateBase: "#262a2e",
        QPalette.ColorRole.Text: "#e3e6e8", QPalette.ColorRole.Button: "#2c3135",
        QPalette.ColorRole.ButtonText: "#e3e6e8", QPalette.ColorRole.Highlight: "#3d6f86",
        QPalette.ColorRole.HighlightedText: "#ffffff", QPalette.ColorRole.ToolTipBase: "#2c3135",
        QPalette.ColorRole.ToolTipText: "#e3e6e8", QPalette.ColorRole.PlaceholderText: "#8b9197",
        QPalette.ColorRole.Link: "#7fb6d0", QPalette.ColorRole.Mid: "#3a3f44",
        QPalette.ColorRole.Light: "#3a3f44", QPalette.ColorRole.Midlight: "#33383c",
        QPalette.ColorRole.Dark: "#15171a", QPalette.ColorRole.Shadow: "#0d0e10",
    }
    for role, colour in roles.items():
        p.setColor(role, QColor(colour))
    for role in (QPalette.ColorRole.Text, QPalette.ColorRole.WindowText, QPalette.ColorRole.ButtonText):
        p.setColor(QPalette.ColorGroup.Disabled, role, QColor("#7b8186"))
    return p
