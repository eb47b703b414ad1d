"""The switching view: glitch against code for every candidate, one transition's waveform beside
the simultaneous-switching one, and the test sine's spectrum.

Follows the view contract of ``view_registry.py``. Every transition of every candidate is solved
on a ``workers.JobRunner`` channel after each finished edit (the newest request wins); the chosen
transition's waveform is one small exact solve, drawn on the GUI thread. Figures that mean
nothing for the inputs (no edge timing, no capacitance) say why instead of showing 0.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QComboBox,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QProgressBar,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from rungwise.core import Design
from rungwise.core.errors import DesignError
from rungwise.core.formatting import format_quantity, format_si
from rungwise.core.metrics.glitch import waveforms
from rungwise.core.timing import timing_of
from rungwise.core.topologies import build

from ..jobs.workers import Progress, runner_for
from ..plots.theme import candidate_colour, follow_palette
from ..window.number_box import NumberBox
from .candidate_combo import refill_candidates
from .dynamics_job import CandidateDynamics, dynamics_job

CHANNEL = "dynamics"
"""JobRunner channel of this view."""

WAVE_POINTS = 800
"""Points of the drawn waveform."""

PLOT_MIN_HEIGHT = 180
"""Smallest height of a plot of this view, px."""
PLOT_MIN_WIDTH = 220
"""Smallest width of a plot of this view, px (two sit side by side on a laptop screen)."""

SETTINGS: dict[str, tuple[str, str]] = {
    "timing.rise": ("Rise", "time for a switch's driven end to reach the high rail, e.g. 5n"),
    "timing.fall": ("Fall", "time for a switch's driven end to reach the low rail, e.g. 3n"),
    "timing.skew": ("Bit delays", "when each bit's edge starts, LSB first, e.g. 0, 1n, 0, 2n"),
    "timing.node_c": ("Node capacitance", "from every network node to ground, e.g. 1p"),
    "sine.samples": ("Sine samples", "points of the test sine, e.g. 4096"),
    "sine.cycles": ("Sine cycles", "whole periods, coprime with the samples, e.g. 67"),
    "sine.amplitude": ("Sine amplitude", "fraction of full scale, e.g. 1"),
}
"""Settings this view edits: key → (label, tooltip)."""


MODEL_NOTE = ("Each switch's driven end ramps between the rails over the rise or fall time, starting "
              "at its bit's delay; its on-resistance changes at mid-edge. Node capacitance sits on "
              "every network node, load capacitance on an unbuffered output. Amplifiers are taken "
              "as ideal. Glitch impulse is measured against every switch moving at once.")
"""The model in words, shown under the settings."""


def setting_text(design: Design, key: str) -> str:
    """A timing or sine setting as typed text (empty when unset)."""
    table, sub = key.split(".")
    value = getattr(design, table).get(sub)
    if value is None:
        return ""
    if sub == "skew":
        return ", ".join(format_si(float(x), "").replace(" ", "") for x in value)
    if table == "sine":
        return f"{value:g}"
    return format_si(float(value), "").replace(" ", "")


def glitch_points(cd: CandidateDynamics) -> tuple[np.ndarray, np.ndarray]:
    """Codes and |net glitch impulse| (V·s) that a log axis can show (finite and > 0)."""
    if cd.dynamics is None:
        return np.zeros(0, int), np.zeros(0)
    g = np.abs(cd.dynamics.glitch)
    keep = np.isfinite(g) & (g > 0)
    return np.nonzero(keep)[0], g[keep]


def wave_span(cd: CandidateDynamics, code: int) -> float:
    """How long to draw transition ``code``: 1.5 × its settling time (or of the slowest), s."""
    s = cd.dynamics.settling if cd.dynamics is not None else np.zeros(1)
    t = s[code] if 0 < code < s.size and np.isfinite(s[code]) and s[code] > 0 else np.nanmax(s)
    tm = timing_of(cd.design)
    edges = max(tm.skew or (0.0,)) + max(tm.rise, tm.fall)
    t = max(float(t) if np.isfinite(t) else 0.0, edges)
    return 1.5 * t if t > 0 else 0.0


def view_notes(cd: CandidateDynamics) -> list[str]:
    """What the view says about one candidate's figures (their reasons, the transitions solved)."""
    if cd.error:
        return [f"{cd.design.label}: cannot be solved: {cd.error}"]
    dyn = cd.dynamics
    lines = []
    if dyn.note:
        lines.append(f"{cd.design.label}: glitch and settling: {dyn.note}")
    elif dyn.glitch_note:
        lines.append(f"{cd.design.label}: glitch: {dyn.glitch_note}")
    if not dyn.note and dyn.sample != "every transition":
        lines.append(f"{cd.design.label}: solved {dyn.sample}")
    s = cd.summary
    q = format_quantity
    lines.append(f"{cd.design.label}: test sine SFDR {q(s['sfdr_db'], 'dB')}, THD {q(s['thd_db'], 'dB')}, "
                 f"SINAD {q(s['sinad_db'], 'dB')}, ENOB {q(s['enob'], 'bits')} "
                 f"(rectangular window, {cd.cycles} cycles)")
    return lines


class DynamicsPane(QWidget):
    """Registered in ``view_registry``: glitch against code, a transition's waveform, spectrum.

    Signals
    -------
    edit_requested(int, object, str)
        The chosen candidate with new timing or sine settings (the window applies the edit).
    """

    edit_requested = Signal(int, object, str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("dynamics_pane")
        self.designs: list[Design] = []
        self.colours: list[str] = []
        self.results: list[CandidateDynamics] = []
        self.code_chosen = False
        self.runner = runner_for(self)
        self._build()

    def _build(self) -> None:
        self.combo = QComboBox(self, objectName="combo_dynamics_candidate")
        self.spin_code = NumberBox(self, objectName="spin_dynamics_code", label="Transition")
        self.spin_code.setKeyboardTracking(False)
        self.spin_code.setToolTip("Transition c is the change from code c − 1 to code c")
        self.progress = QProgressBar(self, objectName="progress_dynamics", minimum=0, maximum=1)
        self.progress.setMaximumWidth(160)
        self.status = QLabel(self, objectName="label_dynamics_status")
        self.status.setWordWrap(True)
        self.status.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        row = QHBoxLayout()
        row.addWidget(QLabel("Candidate", self))
        row.addWidget(self.combo, 1)
        row.addSpacing(12)
        row.addWidget(QLabel("Transition to code", self))
        row.addWidget(self.spin_code)
        row.addStretch(1)
        row.addWidget(self.progress)
        self.edits: dict[str, QLineEdit] = {}
        form = QGridLayout()
        for i, (key, (label, tip)) in enumerate(SETTINGS.items()):
            edit = QLineEdit(self, objectName=f"edit_dynamics_{key.replace('.', '_')}")
            edit.setToolTip(tip)
            edit.setPlaceholderText("0" if key.startswith("timing") else "default")
            edit.returnPressed.connect(self.apply_settings)
            self.edits[key] = edit
            form.addWidget(QLabel(label, self), i // 4, 2 * (i % 4))
            form.addWidget(edit, i // 4, 2 * (i % 4) + 1)
        self.button_apply = QPushButton("Apply to candidate", self, objectName="button_dynamics_apply")
        self.button_apply.clicked.connect(self.apply_settings)
        form.addWidget(self.button_apply, 1, 6, 1, 2)
        self.message = QLabel(self, objectName="label_dynamics_message")
        self.message.setWordWrap(True)
        self.model_note = QLabel(MODEL_NOTE, self, objectName="label_dynamics_model")
        self.model_note.setWordWrap(True)
        self.plot_glitch = follow_palette(pg.PlotWidget(title="Net glitch impulse against code"))
        self.plot_glitch.setObjectName("plot_dynamics_glitch")
        self.plot_glitch.setLogMode(x=False, y=True)
        self.plot_glitch.setLabel("bottom", "transition to code")
        self.plot_glitch.setLabel("left", "|impulse|", units="V·s")
        self.plot_glitch.addLegend()
        self.plot_wave = follow_palette(pg.PlotWidget(title="Output during the transition"))
        self.plot_wave.setObjectName("plot_dynamics_wave")
        self.plot_wave.setLabel("bottom", "time after the code change", units="s")
        self.plot_wave.setLabel("left", "output", units="V")
        self.plot_wave.addLegend()
        self.plot_spectrum = follow_palette(pg.PlotWidget(title="Test sine spectrum (0 dB = largest bin)"))
        self.plot_spectrum.setObjectName("plot_dynamics_spectrum")
        self.plot_spectrum.setLabel("bottom", "DFT bin")
        self.plot_spectrum.setLabel("left", "level (dB)")
        self.plot_spectrum.getAxis("left").enableAutoSIPrefix(False)
        for plot in (self.plot_glitch, self.plot_wave, self.plot_spectrum):
            plot.setMinimumHeight(PLOT_MIN_HEIGHT)
            # an explicit minimum width stops a long title from forcing the plots to overlap
            plot.setMinimumWidth(PLOT_MIN_WIDTH)
        plots = QGridLayout()
        plots.setColumnStretch(0, 1)
        plots.setColumnStretch(1, 1)
        plots.addWidget(self.plot_glitch, 0, 0, 1, 2)
        plots.addWidget(self.plot_wave, 1, 0)
        plots.addWidget(self.plot_spectrum, 1, 1)
        layout = QVBoxLayout(self)
        layout.addLayout(row)
        layout.addLayout(form)
        layout.addWidget(self.model_note)
        layout.addWidget(self.message)
        layout.addLayout(plots, 1)
        layout.addWidget(self.status)
        self.combo.currentIndexChanged.connect(self._on_candidate)
        self.spin_code.valueChanged.connect(self._on_code)

    # --- the view protocol ---------------------------------------------------------------------
    def set_candidates(self, designs: list[Design]) -> None:
        """Solve the compared candidates in the background (the newest request wins)."""
        self.designs = list(designs)
        refill_candidates(self.combo, self.designs)
        self._set_code_range()
        self._show_settings()
        self.status.setText("Solving every transition…")
        self.runner.submit(CHANNEL, dynamics_job(tuple(self.designs)))

    def set_colours(self, colours: list[str]) -> None:
        """Draw each candidate in its comparison colour."""
        self.colours = list(colours)
        self.redraw()

    def shutdown(self) -> None:
        """Cancel and wait for the background work."""
        self.runner.shutdown()

    # --- jobs ----------------------------------------------------------------------------------
    def _on_busy(self, channel: str, busy: bool) -> None:
        if channel == CHANNEL:
            self.progress.setVisible(busy)

    def _on_progress(self, channel: str, p: Progress) -> None:
        if channel == CHANNEL:
            self.progress.setMaximum(max(p.total, 1))
            self.progress.setValue(p.done)

    def _on_failed(self, channel: str, message: str) -> None:
        if channel == CHANNEL:
            self.status.setText(message)

    def _on_finished(self, channel: str, result: object) -> None:
        if channel != CHANNEL:
            return
        self.results = list(result)  # type: ignore[arg-type]
        self.redraw()

    # --- drawing -------------------------------------------------------------------------------
    @property
    def chosen(self) -> CandidateDynamics | None:
        i = self.combo.currentIndex()
        return self.results[i] if 0 <= i < len(self.results) else None

    def _set_code_range(self) -> None:
        i = self.combo.currentIndex()
        if not 0 <= i < len(self.designs):
            return
        top = 2 ** self.designs[i].bits - 1
        self.spin_code.blockSignals(True)
        old = self.spin_code.value()
        self.spin_code.setRange(1, max(top, 1))
        self.spin_code.setValue(old if self.code_chosen and old <= top else max(top // 2 + 1, 1))
        self.spin_code.blockSignals(False)

    def _on_candidate(self, _index: int) -> None:
        self._set_code_range()
        self._show_settings()
        self.redraw()

    def _show_settings(self) -> None:
        i = self.combo.currentIndex()
        if 0 <= i < len(self.designs):
            for key, edit in self.edits.items():
                edit.setText(setting_text(self.designs[i], key))

    def apply_settings(self) -> None:
        """Apply the typed timing and sine settings to the chosen candidate (a refused value is
        named with its allowed range and changes nothing)."""
        i = self.combo.currentIndex()
        if not 0 <= i < len(self.designs):
            return
        d = self.designs[i]
        typed = {k: e.text().strip() for k, e in self.edits.items()}
        tables = {"timing": {}, "sine": {}}
        for key, text in typed.items():
            table, sub = key.split(".")
            if text:
                tables[table][sub] = text
        try:
            new = d.replace(**tables)
        except DesignError as exc:
            self.message.setText(f"Not applied — {exc}")
            return
        self.message.setText("")
        if new.to_dict() != d.to_dict():
            self.edit_requested.emit(i, new, "switch timing and test sine")

    def _on_code(self, _value: int) -> None:
        self.code_chosen = True
        self._draw_wave()

    def redraw(self) -> None:
        """Draw every plot from the latest results."""
        self.plot_glitch.clear()
        for i, cd in enumerate(self.results):
            codes, g = glitch_points(cd)
            if codes.size:
                pen = pg.mkPen(candidate_colour(self.colours, i), width=1.5)
                self.plot_glitch.plot(codes, g, pen=pen, name=cd.design.label)
        self._draw_wave()
        self._draw_spectrum()
        self.status.setText("\n".join(line for cd in self.results for line in view_notes(cd)))

    def _draw_wave(self) -> None:
        self.plot_wave.clear()
        cd = self.chosen
        if cd is None or cd.dynamics is None or cd.dynamics.note:
            return
        code = self.spin_code.value()
        span = wave_span(cd, code)
        if not 0 < code < 2 ** cd.design.bits or span <= 0:
            return
        t = np.linspace(0.0, span, WAVE_POINTS)
        y, ys = waveforms(build(cd.design), timing_of(cd.design), code - 1, code, t)
        colour = candidate_colour(self.colours, self.combo.currentIndex())
        self.plot_wave.plot(t, y, pen=pg.mkPen(colour, width=2), name=f"{code - 1} → {code}")
        self.plot_wave.plot(t, ys, pen=pg.mkPen("#888", style=Qt.PenStyle.DashLine),
                            name="every switch at once")
        g = cd.dynamics.glitch[code]
        text = "no meaning" if not np.isfinite(g) else format_si(float(g), "V·s")
        self.plot_wave.setTitle(f"{code - 1} → {code}: net impulse {text}")

    def _draw_spectrum(self) -> None:
        self.plot_spectrum.clear()
        cd = self.chosen
        if cd is None or cd.bins is None:
            return
        colour = candidate_colour(self.colours, self.combo.currentIndex())
        self.plot_spectrum.plot(cd.bins, cd.spectrum_db, pen=pg.mkPen(colour, width=1))
