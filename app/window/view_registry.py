"""Analysis views the main window shows beside the comparison (statistics, parts, explorer …).

Each entry names a module and a QWidget class, imported only when the window opens. A view class:

- is constructed as ``ViewClass(parent=None)``;
- has ``set_candidates(designs: list[Design]) -> None``, called after every finished edit of the
  compared candidates (it must return at once; heavy work goes to a ``workers.JobRunner``);
- may have a Qt signal ``candidate_requested(object)`` carrying a ``Design`` the user wants to add
  as a new candidate (the window adds it);
- may have a Qt signal ``edit_requested(int, object, str)`` carrying a candidate's index, its
  changed ``Design`` and a description (the window applies it as an undoable edit);
- may have ``set_colours(colours: list[str]) -> None`` ("#rrggbb" per candidate, called with
  ``set_candidates``) to draw each candidate in the colour the comparison uses;
- may have ``shutdown() -> None`` (cancel and wait for its workers; called when the window closes).

Adding a view: append a :class:`ViewEntry` to ``VIEWS`` (one line) — nothing else in the window.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class ViewEntry:
    """One analysis view: stable ``key`` (object name), tab ``title``, ``module`` and ``cls`` name."""

    key: str
    title: str
    module: str
    cls: str


VIEWS: list[ViewEntry] = [
    ViewEntry("stats_pane", "Statistics", "rungwise.app.views.stats", "StatisticsPane"),
    ViewEntry("diagnose_pane", "Built board", "rungwise.app.views.diagnose", "DiagnosePane"),
    ViewEntry("parts_pane", "Parts", "rungwise.app.views.parts", "PartsPane"),
    ViewEntry("explorer_pane", "Trade-offs", "rungwise.app.views.explorer", "ExplorerPane"),
    ViewEntry("schematic_pane", "Schematic", "rungwise.app.views.schematic", "SchematicPane"),
    ViewEntry("dynamics_pane", "Switching and spectrum", "rungwise.app.views.dynamics",
              "DynamicsPane"),
    ViewEntry("search_pane", "Cheapest design", "rungwise.app.views.search", "SearchPane"),
]
"""Registered views, in tab order."""
