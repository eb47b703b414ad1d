"""The curves page: six per-code plots of every candidate with linked code axes and a readout.

Plots: output (with each candidate's ideal line dashed), error against the ideal line, INL
(endpoint or best-fit line), DNL (with the −1 LSB monotonicity limit), output resistance and
reference current. A 16-bit design draws as fast as an 8-bit one: each curve is drawn from a
peak-keeping envelope of its visible codes (:mod:`rungwise.app.plots.decimate`), recomputed when the
code axis is zoomed; ranges are set once per result (no auto-range passes) and the plots take new
results one per event-loop turn.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QEvent, Qt, QTimer, Signal
from PySide6.QtWidgets import QGridLayout, QLabel, QSizePolicy, QVBoxLayout, QWidget

from rungwise.core.formatting import format_quantity

from ..jobs.live_results import CandidateResult
from ..window.comparison_state import Candidate
from ..window.theme import plot_colours
from .decimate import envelope, value_range
from .paint import save_plot
from .specs import PlotSpec, Series

InlLine = Literal["endpoint", "bestfit"]
"""Which straight line INL is measured from."""


def _dnl(r: CandidateResult) -> np.ndarray:
    return np.append(r.evaluation.dnl, np.nan)


@dataclass(frozen=True)
class CodePlot:
    """One plot of the curves page: key (object name suffix), title, unit and the per-code array it
    draws (exported through :func:`.paint.save_plot` as a :class:`.specs.PlotSpec`)."""

    key: str
    title: str
    short: str
    unit: str
    si_prefix: bool
    values: Callable[[CandidateResult, InlLine], np.ndarray]


PLOTS: tuple[CodePlot, ...] = (
    CodePlot("output", "Output", "Output", "V", True, lambda r, _m: r.evaluation.vout),
    CodePlot("error", "Error against ideal line", "Error", "V", True, lambda r, _m: r.error_v),
    CodePlot("inl", "INL", "INL", "LSB", False,
             lambda r, m: r.evaluation.inl_endpoint if m == "endpoint" else r.evaluation.inl_bestfit),
    CodePlot("dnl", "DNL", "DNL", "LSB", False, lambda r, _m: _dnl(r)),
    CodePlot("rout", "Output resistance", "R out", "Ω", True, lambda r, _m: r.evaluation.rout),
    CodePlot("iref", "Reference current", "I ref", "A", True, lambda r, _m: r.evaluation.iref),
)
"""The plots in reading order (two columns)."""

COLUMNS = 2
"""Plots per row."""

LEGEND_PLOT = "output"
"""The plot that carries the legend (its upper left stays clear of a rising output); the readout
under the plots names every candidate in its colour as well."""


class CodePlotsView(QWidget):
    """Per-code curves of every candidate.

    Each plot is its own ``pg.PlotWidget``; new results are applied one plot per event-loop turn
    (each painted at once), so no single turn redraws all six plots. Code axes are linked here, in
    code, so a zoom on one plot follows on all.

    Signals
    -------
    code_hovered(int) — the code under the cursor (−1 when the cursor leaves);
    drawn() — every plot shows the latest results.
    """

    code_hovered = Signal(int)
    drawn = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("curves_view")
        self.inl_line: InlLine = "endpoint"
        self._candidates: list[Candidate] = []
        self._results: list[CandidateResult] = []
        self._full: dict[str, list[np.ndarray | None]] = {}
        self._queue: list[str] = []
        self._styles: dict[str, list[tuple[str, str]]] = {}
        self._user_zoomed = False
        self._syncing = False
        self.widgets: dict[str, pg.PlotWidget] = {}
        self.plots: dict[str, pg.PlotItem] = {}
        self.curves: dict[str, list[pg.PlotDataItem]] = {spec.key: [] for spec in PLOTS}
        self.ideal_curves: list[pg.PlotDataItem] = []
        self.cursors: dict[str, pg.InfiniteLine] = {}
        grid = QGridLayout()
        grid.setSpacing(2)
        for i, spec in enumerate(PLOTS):
            w = self._make_plot(spec, last_row=i // COLUMNS == (len(PLOTS) - 1) // COLUMNS)
            grid.addWidget(w, i // COLUMNS, i % COLUMNS)
        self.readout = QLabel(self, objectName="label_readout")
        self.readout.setTextFormat(Qt.TextFormat.RichText)
        self.readout.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Fixed)
        self.readout.setMinimumHeight(self.readout.fontMetrics().height() * 5 + 6)
        self.readout.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addLayout(grid, 1)
        layout.addWidget(self.readout)
        self._step_timer = QTimer(self, singleShot=True, interval=0)
        self._step_timer.timeout.connect(self._step)
        self.apply_palette()
        self.show_readout(-1)

    # --- construction ---------------------------------------------------------------------------
    def _make_plot(self, spec: CodePlot, last_row: bool) -> pg.PlotWidget:
        w = pg.PlotWidget(self)
        w.setObjectName(f"plot_{spec.key}")
        w.setMinimumSize(200, 140)
        p = w.getPlotItem()
        p.setLabel("left", units=spec.unit if spec.si_prefix else None,
                   text=None if spec.si_prefix else spec.unit)
        p.getAxis("left").enableAutoSIPrefix(spec.si_prefix)
        p.getAxis("left").setWidth(58)
        if last_row:
            p.setLabel("bottom", "Code")
        p.setMenuEnabled(False)
        p.hideButtons()
        if spec.key == LEGEND_PLOT:
            p.addLegend(offset=(6, 4), labelTextSize="8pt", verSpacing=-6)
        cursor = pg.InfiniteLine(angle=90, movable=False)
        cursor.setVisible(False)
        p.addItem(cursor, ignoreBounds=True)
        p.vb.disableAutoRange()
        p.vb.sigXRangeChanged.connect(lambda _vb, rng, k=spec.key: self._on_x_range(k, rng))
        p.vb.sigRangeChangedManually.connect(lambda *_a: self._on_manual_range())
        w.scene().sigMouseMoved.connect(lambda pos, k=spec.key: self._on_mouse(k, pos))
        if spec.key == "dnl":
            self.dnl_limit = pg.InfiniteLine(pos=-1.0, angle=0, movable=False,
                                             label="−1 LSB: monotonic limit",
                                             labelOpts={"position": 0.98, "anchors": [(1, 1), (1, 1)]})
            p.addItem(self.dnl_limit)
        self.cursors[spec.key] = cursor
        self.widgets[spec.key] = w
        self.plots[spec.key] = p
        return w

    def apply_palette(self) -> None:
        """Take background, text and grid colours from the current palette."""
        colours = plot_colours(self.palette())
        fg = pg.mkColor(colours.foreground)
        for spec in PLOTS:
            self.widgets[spec.key].setBackground(colours.background)
            p = self.plots[spec.key]
            for name in ("left", "bottom"):
                axis = p.getAxis(name)
                axis.setPen(fg)
                axis.setTextPen(fg)
            p.setTitle(self._title(spec), size="9pt", color=colours.foreground)
            p.showGrid(x=True, y=True, alpha=colours.grid_alpha)
            if p.legend is not None:
                p.legend.setLabelTextColor(fg)
                bg = pg.mkColor(colours.background)
                bg.setAlpha(200)
                p.legend.setBrush(pg.mkBrush(bg))
            self.cursors[spec.key].setPen(pg.mkPen(colours.foreground, width=1,
                                                   style=Qt.PenStyle.DotLine))
        marker = pg.mkPen(colours.marker, width=1.5, style=Qt.PenStyle.DashLine)
        self.dnl_limit.setPen(marker)
        self.dnl_limit.label.setColor(colours.marker)

    def changeEvent(self, event: QEvent) -> None:
        """Follow a palette change (system light/dark switch)."""
        if event.type() in (QEvent.Type.PaletteChange, QEvent.Type.ApplicationPaletteChange):
            self.apply_palette()
        super().changeEvent(event)

    def _title(self, spec: CodePlot) -> str:
        if spec.key == "inl":
            return "INL from the " + ("endpoint line" if self.inl_line == "endpoint" else "best-fit line")
        return spec.title

    # --- data -------------------------------------------------------------------------------------
    def set_inl_line(self, line: InlLine) -> None:
        """Measure INL from the endpoint or the best-fit line."""
        self.inl_line = line
        spec = next(s for s in PLOTS if s.key == "inl")
        self.plots["inl"].setTitle(self._title(spec), size="9pt",
                                   color=plot_colours(self.palette()).foreground)
        self._start()

    def set_results(self, candidates: Sequence[Candidate], results: Sequence[CandidateResult]) -> None:
        """Draw ``results`` (one per candidate, same order) in the candidates' colours."""
        self._candidates = list(candidates)
        self._results = list(results)
        self._start()

    def _start(self) -> None:
        self._full = {spec.key: [None if r.evaluation is None else spec.values(r, self.inl_line)
                                 for r in self._results] for spec in PLOTS}
        self._queue = [spec.key for spec in PLOTS]
        self.show_readout(-1)
        self._step_timer.start()

    def _step(self) -> None:
        """Apply the latest results to the next plot and paint it."""
        if not self._queue:
            return
        key = self._queue.pop(0)
        self._apply(key)
        w = self.widgets[key]
        if w.isVisible():
            w.repaint()
        if self._queue:
            self._step_timer.start()
        else:
            self.drawn.emit()

    def flush(self) -> None:
        """Apply every pending plot update now (tests, export)."""
        self._step_timer.stop()
        while self._queue:
            self._apply(self._queue.pop(0))
        self.drawn.emit()

    def is_drawing(self) -> bool:
        """Whether some plots still show older results."""
        return bool(self._queue)

    def _apply(self, key: str) -> None:
        p = self.plots[key]
        curves = self.curves[key]
        n = len(self._results)
        while len(curves) < n:
            curves.append(p.plot([], [], name=f"c{len(curves)}"))
        while len(curves) > n:
            p.removeItem(curves.pop())
        style = [(cand.colour, _legend_name(cand, res))
                 for cand, res in zip(self._candidates, self._results, strict=True)]
        if style != self._styles.get(key):  # pens and legend only when they change
            self._styles[key] = style
            if p.legend is not None:
                p.legend.clear()
            for curve, (colour, name) in zip(curves, style, strict=True):
                curve.setPen(pg.mkPen(colour, width=2))
                if p.legend is not None:
                    p.legend.addItem(curve, name)
        if key == "output":
            self._apply_ideal()
        if not self._user_zoomed:
            self._fit(key)
        self._decimate(key)

    def _apply_ideal(self) -> None:
        p = self.plots["output"]
        while len(self.ideal_curves) < len(self._results):
            self.ideal_curves.append(p.plot([], []))
        while len(self.ideal_curves) > len(self._results):
            p.removeItem(self.ideal_curves.pop())
        for ideal, cand, res in zip(self.ideal_curves, self._candidates, self._results, strict=True):
            ideal.setPen(pg.mkPen(cand.colour, width=1, style=Qt.PenStyle.DashLine))
            if res.evaluation is None:
                ideal.setData([], [])
            else:
                ends = np.array([0.0, len(res.evaluation.codes) - 1.0])
                ideal.setData(ends, res.evaluation.summary["ideal_lsb"] * ends)

    def _n_codes(self) -> int:
        return max((len(r.evaluation.codes) for r in self._results if r.evaluation is not None),
                   default=2)

    def _fit(self, key: str) -> None:
        """Set one plot's ranges to its curves (no auto-range passes, no linked repaint)."""
        arrays = [a for a in self._full.get(key, []) if a is not None]
        if key == "dnl":
            arrays.append(np.array([-1.0, 0.0]))
        if key == "output":
            arrays += [c.yData for c in self.ideal_curves if c.yData is not None]
        lo, hi = value_range(arrays) or (0.0, 1.0)
        if hi - lo <= 1e-12 * max(abs(lo), abs(hi), 1e-30):
            half = abs(lo) * 0.05 or 1.0
            lo, hi = lo - half, hi + half
        self._syncing = True
        try:
            vb = self.plots[key].vb
            vb.setRange(xRange=(0, max(self._n_codes() - 1, 1)), yRange=(lo, hi), padding=0.07)
        finally:
            self._syncing = False

    def _decimate(self, key: str) -> None:
        """Draw the visible part of every curve of one plot, decimated for its width."""
        vb = self.plots[key].vb
        x0, x1 = vb.viewRange()[0]
        budget = max(400, 2 * int(vb.width()))
        for curve, full in zip(self.curves[key], self._full.get(key, []), strict=False):
            if full is None:
                curve.setData([], [])
            else:
                x, y = envelope(full, x0, x1, budget)
                curve.setData(x, y)

    def _on_x_range(self, key: str, rng: Sequence[float]) -> None:
        """The code axes are linked here: a zoom on one plot is copied to the others."""
        if self._syncing:
            return
        self._syncing = True
        try:
            for other, p in self.plots.items():
                if other != key:
                    p.vb.setXRange(rng[0], rng[1], padding=0)
        finally:
            self._syncing = False
        for k in self.plots:
            self._decimate(k)

    def _on_manual_range(self) -> None:
        self._user_zoomed = True

    def auto_range(self) -> None:
        """Fit every plot to its curves again (and follow new results until the next zoom)."""
        self._user_zoomed = False
        for key in self.plots:
            self._fit(key)
            self._decimate(key)

    # --- crosshair readout ---------------------------------------------------------------------
    def _on_mouse(self, key: str, pos) -> None:
        p = self.plots[key]
        if p.vb.sceneBoundingRect().contains(pos):
            self.show_readout(round(p.vb.mapSceneToView(pos).x()))
        else:
            self.show_readout(-1)

    def show_readout(self, code: int) -> None:
        """Mark ``code`` on every plot and list every candidate's values there (−1 clears)."""
        valid = [r for r in self._results if r.evaluation is not None]
        n_codes = max((len(r.evaluation.codes) for r in valid), default=0)
        if code < 0 or code >= n_codes:
            for c in self.cursors.values():
                c.setVisible(False)
            self.readout.setText("<i>Point at a curve to read every candidate's values at that "
                                 "code.</i>")
            self.code_hovered.emit(-1)
            return
        for c in self.cursors.values():
            c.setPos(code)
            c.setVisible(True)
        self.readout.setText(readout_html(code, self._candidates, self._results, self.inl_line))
        self.code_hovered.emit(code)

    # --- export -----------------------------------------------------------------------------------
    def export_plot(self, key: str, path: Path) -> None:
        """Save one plot as PNG or SVG (by the file's suffix) with every candidate's curve in its
        colour, through the one plot-export pipeline (written to a temporary file, then renamed)."""
        self.flush()
        plot = next(s for s in PLOTS if s.key == key)
        series = tuple(
            Series(c.name, np.asarray(r.evaluation.codes, dtype=float),
                   np.asarray(plot.values(r, self.inl_line), dtype=float), colour=i)
            for i, (c, r) in enumerate(zip(self._candidates, self._results, strict=True))
            if r.evaluation is not None)
        spec = PlotSpec(key, self._title(plot), "code", f"{plot.short} ({plot.unit})", series)
        save_plot(spec, Path(path), palette=[c.colour for c in self._candidates])


def _legend_name(cand: Candidate, res: CandidateResult) -> str:
    return cand.name if res.evaluation is not None else f"{cand.name} (not solved)"


def readout_html(code: int, candidates: Sequence[Candidate], results: Sequence[CandidateResult],
                 inl_line: InlLine) -> str:
    """Every candidate's values at ``code`` as a small HTML table."""
    head = "".join(f"<th align='right'>&nbsp;{s.short}&nbsp;</th>" for s in PLOTS)
    rows = [f"<tr><th align='left'>Code {code}</th>{head}</tr>"]
    for cand, res in zip(candidates, results, strict=True):
        name = f"<span style='color:{cand.colour}'>■</span> {cand.name}"
        if res.evaluation is None or code >= len(res.evaluation.codes):
            rows.append(f"<tr><td>{name}</td><td colspan='{len(PLOTS)}'>—</td></tr>")
            continue
        cells = []
        for spec in PLOTS:
            v = float(spec.values(res, inl_line)[code])
            text = format_quantity(v, spec.unit, signed=not spec.si_prefix)
            if np.isnan(v):
                text = "—"
            cells.append(f"<td align='right'>&nbsp;{text}&nbsp;</td>")
        rows.append(f"<tr><td>{name}</td>{''.join(cells)}</tr>")
    return "<table cellspacing='0' cellpadding='0'>" + "".join(rows) + "</table>"
