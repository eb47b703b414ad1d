"""The curves page: six per-code plots of every candidate with linked code axes and a readout.

Plots: output (with each candidate's ideal line dashed), error against the ideal line, INL
(endpoint or best-fit line), DNL (with the −1 LSB monotonicity limit), output resistance and
reference current. Long curves are decimated by pyqtgraph (peak mode, clipped to the view), so a
16-bit design draws as fast as an 8-bit one.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

import numpy as np
import pyqtgraph as pg
from pyqtgraph import exporters
from PySide6.QtCore import QEvent, Qt, Signal
from PySide6.QtWidgets import QLabel, QSizePolicy, QVBoxLayout, QWidget

from rungwise.core.units import format_value

from .comparison_state import Candidate
from .live_results import CandidateResult
from .theme import plot_colours

InlLine = Literal["endpoint", "bestfit"]
"""Which straight line INL is measured from."""


def _dnl(r: CandidateResult) -> np.ndarray:
    return np.append(r.evaluation.dnl, np.nan)


@dataclass(frozen=True)
class PlotSpec:
    """One plot: key (object name suffix), title, unit and the per-code array it draws."""

    key: str
    title: str
    unit: str
    si_prefix: bool
    values: Callable[[CandidateResult, InlLine], np.ndarray]


PLOTS: tuple[PlotSpec, ...] = (
    PlotSpec("output", "Output", "V", True, lambda r, _m: r.evaluation.vout),
    PlotSpec("error", "Error against ideal line", "V", True, lambda r, _m: r.error_v),
    PlotSpec("inl", "INL", "LSB", False,
             lambda r, m: r.evaluation.inl_endpoint if m == "endpoint" else r.evaluation.inl_bestfit),
    PlotSpec("dnl", "DNL", "LSB", False, lambda r, _m: _dnl(r)),
    PlotSpec("rout", "Output resistance", "Ω", True, lambda r, _m: r.evaluation.rout),
    PlotSpec("iref", "Reference current", "A", True, lambda r, _m: r.evaluation.iref),
)
"""The plots in reading order (two columns)."""

COLUMNS = 2
"""Plots per row."""

LEGEND_PLOT = "output"
"""The plot that carries the legend (its upper left stays clear of a rising output); the readout
under the plots names every candidate in its colour as well."""


class CodePlotsView(QWidget):
    """Per-code curves of every candidate.

    Signals
    -------
    code_hovered(int) — the code under the cursor (−1 when the cursor leaves).
    """

    code_hovered = Signal(int)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("curves_view")
        self.inl_line: InlLine = "endpoint"
        self._candidates: list[Candidate] = []
        self._results: list[CandidateResult] = []
        self.graphics = pg.GraphicsLayoutWidget(self)
        self.graphics.setObjectName("curves_graphics")
        self.graphics.ci.setSpacing(4)
        self.readout = QLabel(self, objectName="label_readout")
        self.readout.setTextFormat(Qt.TextFormat.RichText)
        self.readout.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Fixed)
        self.readout.setMinimumHeight(self.readout.fontMetrics().height() * 5 + 6)
        self.readout.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.graphics, 1)
        layout.addWidget(self.readout)
        self.plots: dict[str, pg.PlotItem] = {}
        self.curves: dict[str, list[pg.PlotDataItem]] = {}
        self.ideal_curves: list[pg.PlotDataItem] = []
        self.cursors: dict[str, pg.InfiniteLine] = {}
        self._build_plots()
        self._hover_proxy = pg.SignalProxy(self.graphics.scene().sigMouseMoved, rateLimit=30,
                                           slot=self._on_mouse)
        self.apply_palette()
        self.show_readout(-1)

    # --- construction ---------------------------------------------------------------------------
    def _build_plots(self) -> None:
        first: pg.PlotItem | None = None
        for i, spec in enumerate(PLOTS):
            row, col = divmod(i, COLUMNS)
            p = self.graphics.addPlot(row=row, col=col)
            p.setObjectName(f"plot_{spec.key}")
            p.setTitle(spec.title, size="9pt")
            p.setLabel("left", units=spec.unit if spec.si_prefix else None,
                       text=None if spec.si_prefix else spec.unit)
            p.getAxis("left").enableAutoSIPrefix(spec.si_prefix)
            p.getAxis("left").setWidth(58)
            if row == (len(PLOTS) - 1) // COLUMNS:
                p.setLabel("bottom", "Code")
            p.setMenuEnabled(False)
            p.hideButtons()
            if spec.key == LEGEND_PLOT:
                p.addLegend(offset=(6, 4), labelTextSize="8pt", verSpacing=-6)
            if first is None:
                first = p
            else:
                p.setXLink(first)
            cursor = pg.InfiniteLine(angle=90, movable=False)
            cursor.setVisible(False)
            p.addItem(cursor, ignoreBounds=True)
            self.cursors[spec.key] = cursor
            self.plots[spec.key] = p
            self.curves[spec.key] = []
        self.dnl_limit = pg.InfiniteLine(pos=-1.0, angle=0, movable=False,
                                         label="−1 LSB: below this, not monotonic",
                                         labelOpts={"position": 0.98, "anchors": [(1, 1), (1, 1)]})
        self.plots["dnl"].addItem(self.dnl_limit)

    def apply_palette(self) -> None:
        """Take background, text and grid colours from the current palette."""
        colours = plot_colours(self.palette())
        self.graphics.setBackground(colours.background)
        fg = pg.mkColor(colours.foreground)
        for spec in PLOTS:
            p = self.plots[spec.key]
            for name in ("left", "bottom"):
                axis = p.getAxis(name)
                axis.setPen(fg)
                axis.setTextPen(fg)
            p.titleLabel.setText(spec.title, size="9pt", color=colours.foreground)
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

    # --- data -------------------------------------------------------------------------------------
    def set_inl_line(self, line: InlLine) -> None:
        """Measure INL from the endpoint or the best-fit line."""
        self.inl_line = line
        self.plots["inl"].setTitle("INL, " + ("endpoint line" if line == "endpoint" else
                                             "best-fit line"), size="9pt",
                                   color=plot_colours(self.palette()).foreground)
        self._draw()

    def set_results(self, candidates: Sequence[Candidate], results: Sequence[CandidateResult]) -> None:
        """Draw ``results`` (one per candidate, same order) in the candidates' colours."""
        self._candidates = list(candidates)
        self._results = list(results)
        self._draw()

    def _ensure_curves(self, n: int) -> None:
        for spec in PLOTS:
            p, curves = self.plots[spec.key], self.curves[spec.key]
            while len(curves) < n:
                c = p.plot([], [], name=f"c{len(curves)}")
                c.setDownsampling(auto=True, method="peak")
                c.setClipToView(True)
                curves.append(c)
            while len(curves) > n:
                c = curves.pop()
                p.removeItem(c)
        while len(self.ideal_curves) < n:
            c = self.plots["output"].plot([], [])
            c.setDownsampling(auto=True, method="peak")
            c.setClipToView(True)
            self.ideal_curves.append(c)
        while len(self.ideal_curves) > n:
            self.plots["output"].removeItem(self.ideal_curves.pop())

    def _draw(self) -> None:
        n = len(self._results)
        self._ensure_curves(n)
        for spec in PLOTS:
            p = self.plots[spec.key]
            for i, (cand, res) in enumerate(zip(self._candidates, self._results, strict=True)):
                curve = self.curves[spec.key][i]
                curve.setPen(pg.mkPen(cand.colour, width=2))
                if res.evaluation is None:
                    curve.setData([], [])
                else:
                    curve.setData(res.evaluation.codes, spec.values(res, self.inl_line))
                if p.legend is not None:
                    p.legend.removeItem(curve)
                    p.legend.addItem(curve, _legend_name(cand, res))
            p.enableAutoRange()
        for i, (cand, res) in enumerate(zip(self._candidates, self._results, strict=True)):
            ideal = self.ideal_curves[i]
            ideal.setPen(pg.mkPen(cand.colour, width=1, style=Qt.PenStyle.DashLine))
            if res.evaluation is None:
                ideal.setData([], [])
            else:
                codes = res.evaluation.codes
                ideal.setData(codes[[0, -1]], res.evaluation.summary["ideal_lsb"] * codes[[0, -1]])
        self.show_readout(-1)

    def auto_range(self) -> None:
        """Fit every plot to its curves."""
        for p in self.plots.values():
            p.enableAutoRange()

    # --- crosshair readout ---------------------------------------------------------------------
    def _on_mouse(self, event: tuple) -> None:
        pos = event[0]
        for p in self.plots.values():
            if p.sceneBoundingRect().contains(pos):
                x = p.vb.mapSceneToView(pos).x()
                self.show_readout(round(x))
                return
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
        """Save one plot as PNG or SVG (by the file's suffix)."""
        item = self.plots[key]
        if Path(path).suffix.lower() == ".svg":
            exporter = exporters.SVGExporter(item)
        else:
            exporter = exporters.ImageExporter(item)
            exporter.parameters()["width"] = max(int(item.width() * 2), 800)
        exporter.export(str(path))


def _legend_name(cand: Candidate, res: CandidateResult) -> str:
    return cand.name if res.evaluation is not None else f"{cand.name} (not solved)"


def readout_html(code: int, candidates: Sequence[Candidate], results: Sequence[CandidateResult],
                 inl_line: InlLine) -> str:
    """Every candidate's values at ``code`` as a small HTML table."""
    head = "".join(f"<th align='right'>&nbsp;{s.title if s.key != 'error' else 'Error'}&nbsp;</th>"
                   for s in PLOTS)
    rows = [f"<tr><th align='left'>Code {code}</th>{head}</tr>"]
    for cand, res in zip(candidates, results, strict=True):
        name = f"<span style='color:{cand.colour}'>■</span> {cand.name}"
        if res.evaluation is None or code >= len(res.evaluation.codes):
            rows.append(f"<tr><td>{name}</td><td colspan='{len(PLOTS)}'>—</td></tr>")
            continue
        cells = []
        for spec in PLOTS:
            v = float(spec.values(res, inl_line)[code])
            text = format_value(v, spec.unit) if spec.si_prefix else f"{v:+.3f} {spec.unit}"
            if np.isnan(v):
                text = "—"
            cells.append(f"<td align='right'>&nbsp;{text}&nbsp;</td>")
        rows.append(f"<tr><td>{name}</td>{''.join(cells)}</tr>")
    return "<table cellspacing='0' cellpadding='0'>" + "".join(rows) + "</table>"
