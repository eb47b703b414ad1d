"""The values pane: every setting of the candidate being edited, typed in engineering notation.

Widgets are built from ``core.design.FIELDS`` and ``core.types`` and bound by name
(:mod:`rungwise.app.window.binding`). A refused entry is marked at its field with the allowed range and
never reaches the design.
"""

from __future__ import annotations

from PySide6.QtCore import QTimer, Signal
from PySide6.QtWidgets import (
    QComboBox,
    QFormLayout,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QVBoxLayout,
    QWidget,
)

from rungwise.core.build_style import BUILD_OPTIONS, unused_build_keys
from rungwise.core.design import FIELDS, Design
from rungwise.core.display_names import output_name, topology_name
from rungwise.core.errors import DesignError
from rungwise.core.field_use import unused_fields
from rungwise.core.types import OUTPUTS_BY_TOPOLOGY, TOPOLOGIES

from .binding import FieldBinder, bound_inputs, unit_in_text
from .number_box import REFUSED_STYLE, NumberBox
from .skew_panel import SkewPanel

COMMIT_DELAY_MS = 450
"""A moving spin box counts as a finished edit after this pause, ms."""

HINTS: dict[str, str] = {
    "ref_r": "Resistance of the reference source itself (0 = ideal).",
    "ron_high": "On-resistance of the switch or port pin that drives a leg to the reference.",
    "ron_low": "On-resistance of the switch or port pin that drives a leg to ground.",
    "load_r": "Resistance the output drives; type 'open' for none.",
    "series_ratio": "Skew: ladder series resistors = ratio × R (1 = classic R-2R); a per-bit "
                    "binary-weighted network's bits step by 2 × ratio. Above 1 every carry keeps a "
                    "margin against the parts' tolerance, at some INL.",
    "gain": "Gain of the buffer amplifier (buffered outputs only).",
    "feedback_r": "Feedback resistor of the summing or transimpedance amplifier; empty = the value "
                  "giving the ideal full scale.",
    "build.lsb_section": "Segmented networks: the binary bits as an R-2R ladder, or as equal units "
                         "(bit k = 2^k units, each segment 2^(N−M) units, one unit to ground) all "
                         "joined at the output.",
}
"""Tooltips for fields whose meaning is not obvious from the label."""

BUILD_CHOICES: dict[str, tuple[str, dict[str, str]]] = {
    "binary": ("Bit resistors made as", {"per-bit": "one resistor per bit",
                                         "unit-array": "equal-unit array"}),
    "two_r": ("2R parts made as", {"single": "one resistor", "two-units": "two R in series"}),
    "lsb_section": ("Segmented LSBs made as", {"r2r": "R-2R ladder", "unit-array": "equal-unit array"}),
}
"""Build key (``core.build_style.BUILD_OPTIONS``) → caption and the words shown for each value."""

CAPTION_WIDTH_TEXT = "Reference voltage"
"""Captions up to about this width sit beside their field; longer ones above it."""

FIELD_WIDTH_TEXT = "0.000000 kΩ"
"""Entry fields are at least this wide."""



class DesignPane(QWidget):
    """Edits one design; emits the new design after each accepted entry.

    Signals
    -------
    design_edited(Design, str) — an accepted, finished entry with its description;
    design_previewed(Design) — a value that is still moving (spin box), for live curves only.
    """

    design_edited = Signal(object, str)
    design_previewed = Signal(object)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("design_pane")
        self._design: Design | None = None
        self._pending: tuple[str, str] | None = None
        self._build()
        self.setStyleSheet(REFUSED_STYLE)
        self.binder = FieldBinder(self)
        self.binder.set_choices("topology", [(topology_name(t), t) for t in TOPOLOGIES])
        for key, (_label, words) in BUILD_CHOICES.items():
            self.binder.set_choices(f"build.{key}", [(words[v], v) for v in BUILD_OPTIONS[key]])
        self.binder.entry_finished.connect(self._on_finished)
        self.binder.entry_changing.connect(self._on_changing)
        self._commit_timer = QTimer(self, singleShot=True, interval=COMMIT_DELAY_MS)
        self._commit_timer.timeout.connect(self.commit_pending)

    def _build(self) -> None:
        outer = QVBoxLayout(self)
        outer.setContentsMargins(0, 0, 0, 0)
        self.heading = QLabel(self, objectName="label_heading")
        self.heading.setWordWrap(True)
        outer.addWidget(self.heading)
        form = QFormLayout()
        form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
        form.setRowWrapPolicy(QFormLayout.RowWrapPolicy.WrapLongRows)  # long captions sit above
        outer.addLayout(form)
        self.skew = SkewPanel(self)
        self.skew.apply_requested.connect(self.design_edited)
        outer.addWidget(self.skew)
        outer.addStretch(1)
        for key, label in (("topology", "Network"), ("output", "Output")):
            combo = QComboBox(self, objectName=f"combo_{key}")
            combo.setMinimumContentsLength(14)
            self._add_row(form, key, label, combo, "")
        for key, spec in FIELDS.items():
            if spec.integer:
                w: QWidget = NumberBox(self, objectName=f"spin_{key}", label=key, unit=spec.unit)
                w.setRange(int(spec.low), int(spec.high))
                w.setKeyboardTracking(False)
                unit = spec.unit
            else:
                w = QLineEdit(self, objectName=f"edit_{key}")
                w.setPlaceholderText(f"default, {spec.unit}" if spec.optional else spec.unit)
                w.setMinimumWidth(w.fontMetrics().horizontalAdvance(FIELD_WIDTH_TEXT))
                unit = "" if unit_in_text(spec.unit) else spec.unit  # else the text says ``10 kΩ``
            w.setToolTip(HINTS.get(key, ""))
            self._add_row(form, key, spec.label, w, unit)
        for key, (label, _words) in BUILD_CHOICES.items():
            combo = QComboBox(self, objectName=f"combo_build.{key}")
            self._add_row(form, f"build.{key}", label, combo, "")

    def _add_row(self, form: QFormLayout, key: str, label: str, w: QWidget, unit: str) -> None:
        box = QWidget(self)
        col = QVBoxLayout(box)
        col.setContentsMargins(0, 0, 0, 0)
        col.setSpacing(1)
        row = QHBoxLayout()
        row.addWidget(w, 1)
        if unit:
            row.addWidget(QLabel(unit, box, objectName=f"unit_{key}"))
        col.addLayout(row)
        err = QLabel(box, objectName=f"error_{key}")
        err.setWordWrap(True)
        err.setStyleSheet("color: #c23b3b;")
        err.setVisible(False)
        col.addWidget(err)
        caption = QLabel(label, self)
        caption.setToolTip(HINTS.get(key, ""))
        caption.setBuddy(w)
        if isinstance(w, QComboBox) and key in ("topology", "output"):
            form.addRow(caption)  # a network's name is long: its list takes the whole width
            form.addRow(box)
        else:
            form.addRow(caption, box)

    # --- model → widgets -------------------------------------------------------------------------
    @property
    def design(self) -> Design | None:
        """The design shown."""
        return self._design

    def set_design(self, design: Design, same_candidate: bool = True) -> None:
        """Show ``design``; on the same candidate, refused entries keep their text."""
        self._commit_timer.stop()
        self._pending = None
        self._design = design
        self.binder.set_choices("output", [(output_name(o), o)
                                           for o in OUTPUTS_BY_TOPOLOGY[design.topology]])
        self.binder.show(design, keep_refused=same_candidate)
        self.heading.setText(f"<b>{design.label}</b>")
        self._grey_unused(design)
        self.skew.set_design(design)

    def _grey_unused(self, design: Design) -> None:
        """Disable the fields ``design`` does not use, saying why in their tooltips."""
        unused = unused_fields(design)
        inputs = bound_inputs(self)
        for key in FIELDS:
            w = inputs[key]
            reason = unused.get(key)
            w.setEnabled(reason is None)
            w.setToolTip(f"Not used here: {reason}." if reason else HINTS.get(key, ""))
        unused_build = unused_build_keys(design)
        for key in BUILD_CHOICES:
            w, reason = inputs[f"build.{key}"], unused_build.get(key)
            w.setEnabled(reason is None)
            w.setToolTip(f"Not used here: {reason}." if reason else "")

    # --- widgets → model -------------------------------------------------------------------------
    def _try(self, key: str, text: str) -> Design | None:
        assert self._design is not None
        try:
            if key == "topology":
                return self._design.replace(topology=text)
            return self._design.with_settings({key: text})
        except DesignError as exc:
            self.binder.mark_error(key, f"{_caption(key)}: {exc.reason}")
            return None

    def _on_finished(self, key: str, text: str) -> None:
        self._commit_timer.stop()
        self._pending = None
        if self._design is None:
            return
        new = self._try(key, text)
        if new is None:
            return
        self.binder.clear_error(key)
        if new.to_dict() == self._design.to_dict():
            self.binder.show(new, keep_refused=True)
            return
        self.design_edited.emit(new, f"{_caption(key)} of {new.label} = {text}")

    def _on_changing(self, key: str, text: str) -> None:
        if self._design is None:
            return
        self._pending = (key, text)
        try:
            preview = self._design.with_settings({key: text})
        except DesignError:
            return
        self.design_previewed.emit(preview)
        self._commit_timer.start()

    def commit_pending(self) -> None:
        """Finish a moving value now (called after a pause, or by tests)."""
        self._commit_timer.stop()
        if self._pending is not None:
            key, text = self._pending
            self._pending = None
            self._on_finished(key, text)

    def shutdown(self) -> None:
        """Stop the ratio search's worker."""
        self.skew.shutdown()

    def has_pending(self) -> bool:
        """Whether a moving value waits to be committed."""
        return self._pending is not None



def _caption(key: str) -> str:
    """The caption of a bound key, for messages and undo descriptions."""
    if key in FIELDS:
        return FIELDS[key].label
    if key.startswith("build."):
        return BUILD_CHOICES[key.removeprefix("build.")][0]
    return key
