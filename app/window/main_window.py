"""The comparison window: curves and analysis views in the middle, the candidates and values and
the figures table in dock panels that can be hidden, floated and put back (their places are
remembered). On a window narrower than :data:`WIDE_WINDOW` the two panels share the left side,
values above figures, so an analysis view keeps most of the width. Menus, files and remembered
settings live here; each panel is its own module.
"""

from __future__ import annotations

import importlib
from pathlib import Path

from PySide6.QtCore import QByteArray, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QActionGroup, QCloseEvent, QGuiApplication, QKeySequence, QShowEvent
from PySide6.QtWidgets import (
    QApplication,
    QDockWidget,
    QFileDialog,
    QGraphicsView,
    QGroupBox,
    QLabel,
    QMainWindow,
    QMessageBox,
    QProgressBar,
    QProxyStyle,
    QPushButton,
    QScrollArea,
    QStyle,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from rungwise.core import designfile
from rungwise.core.demo import demo_candidates
from rungwise.core.design import Design
from rungwise.core.errors import RungwiseError
from rungwise.core.formatting import format_quantity

from ..jobs.live_results import LiveResults, ResultSet
from ..plots.curves import PLOTS, CodePlotsView
from .candidate_list import CandidateListPane
from .compare_table import CompareTable, reasons_text
from .comparison_model import ComparisonModel
from .comparison_state import Candidate, with_colours
from .design_pane import CAPTION_WIDTH_TEXT, FIELD_WIDTH_TEXT, DesignPane
from .files import install as install_file_features
from .memory import load_memory, save_memory
from .texts import ABOUT_HTML, APP_TITLE
from .view_frame import ViewFrame
from .view_registry import VIEWS, ViewEntry

BUSY_SHOW_MS = 250
"""Progress and Cancel appear when a computation runs longer than this, ms."""

STOPPED_TEXT = ("Stopped: the curves and figures are of earlier values; change a value or press F5 "
                "(Compute again)")
"""Status line after a Stop that left results of earlier values on screen."""

FILE_FILTER = "Rungwise designs (*.rwd.toml *.toml);;All files (*)"
"""File dialog filter for design files."""

PLOT_MIN_HEIGHT = 180
"""Smallest height of a plot in an analysis view, px."""

TAB_SPACE = 10
"""Space beside a tab's title, px (a little tighter than usual, so every view's tab fits beside a
docked panel at 1366 px)."""


class _TightTabs(QProxyStyle):
    """The application's style with :data:`TAB_SPACE` beside each tab title (a style sheet
    would stop the plots following palette changes)."""

    def pixelMetric(self, metric, option=None, widget=None) -> int:
        """Tab spacing of our own; every other measure from the base style."""
        if metric == QStyle.PixelMetric.PM_TabBarTabHSpace:
            return TAB_SPACE
        return super().pixelMetric(metric, option, widget)

WIDE_WINDOW = 1700
"""Window width, px, from which the figures panel sits right of the curves instead of below the
values panel on the left."""

DOCK_FEATURES = (QDockWidget.DockWidgetFeature.DockWidgetClosable
                 | QDockWidget.DockWidgetFeature.DockWidgetMovable
                 | QDockWidget.DockWidgetFeature.DockWidgetFloatable)
"""What a person may do with a panel: hide it, move it to another side, float it."""


class MainWindow(QMainWindow):
    """The comparison window over a :class:`ComparisonModel`.

    Signals
    -------
    problem_shown(str) — a message was shown to the person (file errors, failed computations).
    """

    problem_shown = Signal(str)

    def __init__(self, candidates: list[Candidate] | None = None, remember: bool = True) -> None:
        super().__init__()
        self.setObjectName("main_window")
        self.remember = remember
        self.ask_before_closing = True
        self._sizes_pending = False
        self._user_sized = False
        self.model = ComparisonModel(
            candidates or with_colours(demo_candidates(), named_by_program=True), self)
        self.live = LiveResults(self)
        self.views: dict[str, QWidget] = {}
        self._build()
        self._build_menus()
        self._connect()
        self.files = install_file_features(self)  # undo/redo, recent files, crash copies, exports
        self._memory = load_memory() if remember else {}
        self._restore_memory()
        self.pane.set_design(self.model.state.current.design, same_candidate=False)
        self._update_title()
        self._push_to_views()
        self.live.request(self.model.state.designs, now=True)

    # --- layout -----------------------------------------------------------------------------------
    def _build(self) -> None:
        self.setDockNestingEnabled(True)
        self.candidates_pane = CandidateListPane(self.model, self)
        self.pane = DesignPane(self)
        left = QWidget(self)
        col = QVBoxLayout(left)
        box = QGroupBox("Candidates", left, objectName="group_candidates")
        QVBoxLayout(box).addWidget(self.candidates_pane)
        col.addWidget(box)
        box = QGroupBox("Values of the selected candidate", left, objectName="group_values")
        QVBoxLayout(box).addWidget(self.pane)
        col.addWidget(box, 1)
        scroll = QScrollArea(self, objectName="scroll_left")
        scroll.setWidget(left)
        scroll.setWidgetResizable(True)
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setMinimumWidth(self._values_width())
        self.dock_values = self._dock("Candidates and values", "dock_values", scroll)

        self.plots = CodePlotsView(self)
        self.tabs = QTabWidget(self, objectName="tabs_analysis")
        self.tabs.setMinimumWidth(420)
        self._tab_style = _TightTabs(QApplication.style().name())
        self.tabs.tabBar().setStyle(self._tab_style)
        self.tabs.addTab(self.plots, "Curves")
        for entry in VIEWS:
            self._add_view(entry)
        self.setCentralWidget(self.tabs)

        self.table = CompareTable(self)
        right = QWidget(self, objectName="group_figures")
        lay = QVBoxLayout(right)
        lay.addWidget(self.table)
        self.meaning_note = QLabel(right, objectName="label_no_meaning")
        self.meaning_note.setWordWrap(True)
        self.meaning_note.hide()
        lay.addWidget(self.meaning_note)
        note = QLabel(f"{'◆'} marks the best value in a row; LSB rows compare per full scale when "
                      "the bits differ (hover a mark for its rule).", right)
        note.setWordWrap(True)
        lay.addWidget(note)
        self.dock_figures = self._dock("Figures", "dock_figures", right)

        bar = self.statusBar()
        self.status_text = QLabel(self, objectName="label_status")
        self.progress = QProgressBar(self, objectName="progress_compute")
        self.progress.setMaximumWidth(160)
        self.cancel_button = QPushButton("Stop", self, objectName="button_stop")
        self.cancel_button.setToolTip("Stop the running computation (Esc)")
        bar.addWidget(self.status_text, 1)
        bar.addPermanentWidget(self.progress)
        bar.addPermanentWidget(self.cancel_button)
        self.progress.hide()
        self.cancel_button.hide()
        self._busy_timer = QTimer(self, singleShot=True, interval=BUSY_SHOW_MS)
        self._busy_timer.timeout.connect(self._show_busy)

    def _dock(self, title: str, name: str, widget: QWidget) -> QDockWidget:
        dock = QDockWidget(title, self, objectName=name)
        dock.setFeatures(DOCK_FEATURES)
        dock.setWidget(widget)
        self.addDockWidget(Qt.DockWidgetArea.LeftDockWidgetArea, dock)
        return dock

    def arrange_panels(self) -> None:
        """Put the panels back in their default places for the window's width: side by side
        around the curves on a wide window, else one above the other on the left."""
        self._user_sized = False
        for dock in (self.dock_values, self.dock_figures):
            dock.setFloating(False)
            dock.show()
        self.addDockWidget(Qt.DockWidgetArea.LeftDockWidgetArea, self.dock_values)
        if self.width() >= WIDE_WINDOW:
            self.addDockWidget(Qt.DockWidgetArea.RightDockWidgetArea, self.dock_figures)
            self.resizeDocks([self.dock_values, self.dock_figures],
                             [max(self._values_width(), int(self.width() * 0.2)),  # room for values
                              min(self._table_width(), int(self.width() * 0.4))],
                             Qt.Orientation.Horizontal)
        else:  # one column on the left, values above figures: both in sight, the views get the rest
            self.splitDockWidget(self.dock_values, self.dock_figures, Qt.Orientation.Vertical)
            self.resizeDocks([self.dock_values], [min(max(self._table_width(), self._values_width()),
                                                      int(self.width() * 0.48))],
                             Qt.Orientation.Horizontal)
            self.resizeDocks([self.dock_values, self.dock_figures],
                             [int(self.height() * 0.4), int(self.height() * 0.6)],
                             Qt.Orientation.Vertical)

    def _values_width(self) -> int:
        """Width of the values panel: a caption beside a field of a comfortable width."""
        fm = self.fontMetrics()
        return max(260, fm.horizontalAdvance(CAPTION_WIDTH_TEXT) + fm.horizontalAdvance(FIELD_WIDTH_TEXT)
                   + 90)

    def _add_view(self, entry: ViewEntry) -> None:
        try:
            cls = getattr(importlib.import_module(entry.module), entry.cls)
            view = cls(parent=None)
        except Exception as exc:  # a broken view must not take the window down
            view = QLabel(f"This view could not be opened:\n{type(exc).__name__}: {exc}")
            view.setAlignment(Qt.AlignmentFlag.AlignCenter)
        view.setObjectName(entry.key)
        for plot in view.findChildren(QGraphicsView):  # the view scrolls rather than squash a plot
            plot.setMinimumHeight(max(plot.minimumHeight(), PLOT_MIN_HEIGHT))
        holder = QScrollArea(self.tabs, objectName=f"scroll_{entry.key}")
        holder.setWidget(ViewFrame(view))  # a view's own minimum size must not squeeze the others
        holder.setWidgetResizable(True)
        holder.setFrameShape(QScrollArea.Shape.NoFrame)
        self.tabs.addTab(holder, entry.title)
        self.views[entry.key] = view
        signal = getattr(view, "candidate_requested", None)
        if signal is not None:
            signal.connect(self._on_candidate_requested)
        edit = getattr(view, "edit_requested", None)
        if edit is not None:
            edit.connect(self._on_edit_requested)

    def _build_menus(self) -> None:
        def action(menu, text, slot, shortcut=None, name=None):
            act = QAction(text, self)
            if shortcut is not None:
                act.setShortcut(QKeySequence(shortcut))
            act.triggered.connect(slot)
            if name:
                act.setObjectName(name)
            menu.addAction(act)
            return act

        bar = self.menuBar()
        m = bar.addMenu("&File")
        action(m, "&New comparison from the demo", self.new_from_demo, QKeySequence.StandardKey.New,
               "action_new")
        action(m, "&Open…", self.open_dialog, QKeySequence.StandardKey.Open, "action_open")
        action(m, "&Save", self.save, QKeySequence.StandardKey.Save, "action_save")
        action(m, "Save &as…", self.save_as_dialog, QKeySequence.StandardKey.SaveAs, "action_save_as")
        m.addSeparator()
        plots = m.addMenu("Save &plot image")
        for spec in PLOTS:
            action(plots, f"{spec.title}…", lambda _c=False, k=spec.key: self.export_plot_dialog(k))
        m.addSeparator()
        action(m, "&Quit", self.close, QKeySequence.StandardKey.Quit, "action_quit")

        m = bar.addMenu("&Edit")
        action(m, "&Copy figures for a spreadsheet", self.copy_tsv, "Ctrl+Shift+C", "action_copy_tsv")
        action(m, "Copy figures as &text", self.copy_text, "Ctrl+Alt+C", "action_copy_text")
        m.addSeparator()
        action(m, "&Stop computing", self.stop_computing, "Esc", "action_stop")
        action(m, "Compute a&gain", self.compute_again, "F5", "action_compute")

        m = bar.addMenu("&Candidate")
        self.action_add = action(m, "&Add a network", lambda: self.model.state.add(), "Ctrl+T",
                                 "action_add")
        self.action_duplicate = action(m, "&Duplicate", lambda: self.model.state.duplicate(
            self.model.state.selected), "Ctrl+D", "action_duplicate")
        self.action_remove = action(m, "&Remove", lambda: self.model.state.remove(
            self.model.state.selected), "Ctrl+Shift+D", "action_remove")
        action(m, "Re&name", self._rename_current, "F2", "action_rename")
        m.addSeparator()
        action(m, "&Next candidate", lambda: self._step_selection(1), "Ctrl+PgDown")
        action(m, "&Previous candidate", lambda: self._step_selection(-1), "Ctrl+PgUp")

        m = bar.addMenu("C&urves")
        group = QActionGroup(self)
        self.action_inl_endpoint = action(m, "INL from the &endpoint line",
                                          lambda: self.set_inl_line("endpoint"), "Ctrl+1",
                                          "action_inl_endpoint")
        self.action_inl_bestfit = action(m, "INL from the &best-fit line",
                                         lambda: self.set_inl_line("bestfit"), "Ctrl+2",
                                         "action_inl_bestfit")
        for a in (self.action_inl_endpoint, self.action_inl_bestfit):
            a.setCheckable(True)
            group.addAction(a)
        self.action_inl_endpoint.setChecked(True)
        m.addSeparator()
        action(m, "&Fit all curves", self.plots.auto_range, "Ctrl+0", "action_fit")

        m = bar.addMenu("&Panels")
        for dock, key in ((self.dock_values, "Ctrl+Shift+V"), (self.dock_figures, "Ctrl+Shift+F")):
            toggle = dock.toggleViewAction()
            toggle.setShortcut(QKeySequence(key))
            toggle.setObjectName(f"action_show_{dock.objectName()}")
            m.addAction(toggle)
        m.addSeparator()
        action(m, "Put the panels &back", self.arrange_panels, "Ctrl+Shift+B", "action_panels_back")

        m = bar.addMenu("&Help")
        action(m, "&About Rungwise and cautions", self.show_about, QKeySequence.StandardKey.HelpContents,
               "action_about")

    def _connect(self) -> None:
        self.model.candidates_changed.connect(self._on_candidates_changed)
        self.model.selection_changed.connect(self._on_selection_changed)
        self.model.file_changed.connect(self._update_title)
        self.pane.design_edited.connect(self._on_design_edited)
        self.pane.design_previewed.connect(self._on_design_previewed)
        self.live.results_changed.connect(self._on_results)
        self.live.busy_changed.connect(self._on_busy)
        self.live.progress_changed.connect(self._on_progress)
        self.live.failed.connect(lambda msg: self.show_problem(f"The computation failed: {msg}"))
        self.cancel_button.clicked.connect(self.stop_computing)

    # --- model → everything ------------------------------------------------------------------------
    def _on_candidates_changed(self) -> None:
        state = self.model.state
        self.pane.set_design(state.current.design, same_candidate=True)
        can_add = state.can_add()
        self.action_add.setEnabled(can_add)
        self.action_duplicate.setEnabled(can_add)
        self.action_remove.setEnabled(len(state.candidates) > 1)
        self.live.request(state.designs)
        self._push_to_views()

    def _on_selection_changed(self, _index: int) -> None:
        self.pane.set_design(self.model.state.current.design, same_candidate=False)

    def _push_to_views(self) -> None:
        designs = self.model.state.designs
        colours = [c.colour for c in self.model.state.candidates]
        for view in self.views.values():
            paint = getattr(view, "set_colours", None)
            if paint is not None:
                paint(colours)
            setter = getattr(view, "set_candidates", None)
            if setter is not None:
                setter(designs)

    def _on_design_edited(self, design: Design, description: str) -> None:
        self.model.state.set_design(self.model.state.selected, design, description)

    def _on_design_previewed(self, design: Design) -> None:
        designs = self.model.state.designs
        designs[self.model.state.selected] = design
        self.live.request(designs)

    def _on_edit_requested(self, index: int, design: object, description: str) -> None:
        """A view changed a compared candidate's settings (an undoable edit like any other)."""
        if isinstance(design, Design) and 0 <= index < len(self.model.state.candidates):
            self.model.state.set_design(index, design, description)

    def _on_candidate_requested(self, design: object) -> None:
        if not isinstance(design, Design):
            return
        if not self.model.state.add(design):
            self.show_problem("Four candidates are compared already; remove one to add another.")

    def _on_results(self, result: ResultSet) -> None:
        cands = self.model.state.candidates
        if len(cands) != len(result.results):
            return  # a newer request is on its way
        shown = [Candidate(r.design, c.colour, c.given) for c, r in zip(cands, result.results, strict=True)]
        self.plots.set_results(shown, result.results)
        self.table.set_results(shown, result.results)
        why = reasons_text(shown, result.results)
        self.meaning_note.setText(why)
        self.meaning_note.setVisible(bool(why))
        self._fit_table()
        failed = [f"{c.name}: {r.message}" for c, r in zip(shown, result.results, strict=True)
                  if r.evaluation is None]
        if failed:
            self.status_text.setText("Not solved — " + "; ".join(failed))
        else:
            bits = sorted({d.design.bits for d in shown})
            self.status_text.setText(
                f"{len(shown)} candidates, {'/'.join(map(str, bits))} bits, solved in "
                f"{format_quantity(result.seconds, 's')} ({result.computed} recomputed)")

    def _on_busy(self, busy: bool) -> None:
        if busy:
            if not self._busy_timer.isActive() and not self.progress.isVisible():
                self._busy_timer.start()
        else:
            self._busy_timer.stop()
            self.progress.hide()
            self.cancel_button.hide()

    def _show_busy(self) -> None:
        if self.live.is_busy():
            self.progress.show()
            self.cancel_button.show()

    def _on_progress(self, done: int, total: int) -> None:
        self.progress.setMaximum(total)
        self.progress.setValue(done)
        self.progress.setFormat(f"candidate {done} of {total}")

    def stop_computing(self) -> None:
        """Stop the running computation; when that leaves curves and figures of earlier values,
        say so (they stay until a value changes or Compute again)."""
        self.live.cancel()
        latest = self.live.latest
        if latest is None or [r.design for r in latest.results] != self.model.state.designs:
            self.status_text.setText(STOPPED_TEXT)

    def compute_again(self) -> None:
        """Compute the shown candidates now (after a Stop)."""
        self.live.request(self.model.state.designs, now=True)

    # --- candidate actions ---------------------------------------------------------------------------
    def _rename_current(self) -> None:
        lst = self.candidates_pane.list
        item = lst.item(self.model.state.selected)
        if item is not None:
            lst.editItem(item)

    def _step_selection(self, step: int) -> None:
        n = len(self.model.state.candidates)
        self.model.state.select((self.model.state.selected + step) % n)

    def set_inl_line(self, line: str) -> None:
        """Measure INL from the ``"endpoint"`` or ``"bestfit"`` line."""
        self.plots.set_inl_line(line)
        (self.action_inl_endpoint if line == "endpoint" else self.action_inl_bestfit).setChecked(True)

    # --- files ----------------------------------------------------------------------------------------
    def new_from_demo(self) -> None:
        """Start again from the built-in demo comparison."""
        self.model.replace_all(with_colours(demo_candidates(), named_by_program=True), None,
                               "new comparison from the demo")
        self.files.opened(None, None)

    def open_dialog(self) -> None:
        """Ask for a design file and open it."""
        start = str(self.model.path.parent) if self.model.path else ""
        path, _ = QFileDialog.getOpenFileName(self, "Open a design file", start, FILE_FILTER)
        if path:
            self.open_file(Path(path))

    def open_file(self, path: Path) -> bool:
        """Open a design file; a refused file leaves the comparison as it was."""
        try:
            doc = designfile.load(Path(path))
        except RungwiseError as exc:
            self.files.open_failed(Path(path))
            self.show_problem(f"Could not open {path}:\n{exc}")
            return False
        colours = doc.settings.get("colours", []) if isinstance(doc.settings, dict) else []
        self.model.replace_all(with_colours(doc.candidates[:4], colours if isinstance(colours, list)
                                            else []), Path(path), f"open {Path(path).name}")
        self.files.opened(Path(path), doc)
        if len(doc.candidates) > 4:
            self.show_problem(f"{path} lists {len(doc.candidates)} candidates; the first four are "
                              "compared.")
        return True

    def save(self) -> bool:
        """Save to the current file, or ask for one."""
        if self.model.path is None:
            return self.save_as_dialog()
        return self.save_to(self.model.path)

    def save_as_dialog(self) -> bool:
        """Ask for a file name and save there."""
        start = str(self.model.path) if self.model.path else "comparison.rwd.toml"
        path, _ = QFileDialog.getSaveFileName(self, "Save the comparison", start, FILE_FILTER)
        return self.save_to(Path(path)) if path else False

    def save_to(self, path: Path) -> bool:
        """Write the comparison atomically to ``path``; errors are shown, never raised."""
        doc = self.files.document()  # keeps the open file's analysis settings and targets
        try:
            designfile.save(Path(path), doc)
        except (OSError, RungwiseError) as exc:
            self.show_problem(f"Could not save {path}:\n{exc}")
            return False
        self.model.set_file(Path(path), modified=False)
        self.files.saved(Path(path))
        self.status_text.setText(f"Saved {path}")
        return True

    def export_plot_dialog(self, key: str) -> None:
        """Ask for a PNG or SVG file name and save one plot there."""
        path, chosen = QFileDialog.getSaveFileName(self, "Save plot image", f"{key}.png",
                                                   "PNG image (*.png);;SVG drawing (*.svg)")
        if not path:
            return
        if not Path(path).suffix:
            path += ".svg" if "svg" in chosen.lower() else ".png"
        try:
            self.plots.export_plot(key, Path(path))
        except Exception as exc:
            self.show_problem(f"Could not save the plot to {path}:\n{exc}")

    def copy_tsv(self) -> None:
        """Copy the figures table as tab-separated text."""
        QGuiApplication.clipboard().setText(self.table.as_tsv())

    def copy_text(self) -> None:
        """Copy the figures table as aligned text."""
        QGuiApplication.clipboard().setText(self.table.as_text())

    # --- messages -------------------------------------------------------------------------------------
    def show_problem(self, text: str) -> None:
        """Tell the person about a problem without blocking (a window-modal message)."""
        self.status_text.setText(text.splitlines()[0])
        self.problem_shown.emit(text)
        box = QMessageBox(QMessageBox.Icon.Warning, APP_TITLE, text, QMessageBox.StandardButton.Ok, self)
        box.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
        box.open()

    def show_about(self) -> None:
        """The About box with the cautions."""
        box = QMessageBox(QMessageBox.Icon.Information, f"About {APP_TITLE}", ABOUT_HTML,
                          QMessageBox.StandardButton.Ok, self)
        box.setObjectName("about_box")
        box.setTextFormat(Qt.TextFormat.RichText)
        box.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
        box.open()

    def _update_title(self) -> None:
        name = self.model.path.name if self.model.path else "demo comparison"
        self.setWindowTitle(f"{name}[*] — {APP_TITLE}")  # Qt shows '*' at [*] when modified
        self.setWindowModified(self.model.modified)

    # --- memory and closing ---------------------------------------------------------------------------
    def _restore_memory(self) -> None:
        mem = self._memory
        geometry = mem.get("geometry")
        if isinstance(geometry, str) and self.restoreGeometry(QByteArray.fromBase64(geometry.encode())):
            pass
        else:
            screen = QGuiApplication.primaryScreen().availableGeometry()
            self.resize(min(1500, int(screen.width() * 0.92)), min(920, int(screen.height() * 0.9)))
        docks = mem.get("docks")
        if isinstance(docks, str) and self.restoreState(QByteArray.fromBase64(docks.encode())):
            self._user_sized = True  # the person's own layout from last time
        else:
            self._sizes_pending = True  # set on first show, when the window has its real size
        if mem.get("inl_line") in ("endpoint", "bestfit"):
            self.set_inl_line(mem["inl_line"])

    def showEvent(self, event: QShowEvent) -> None:
        """Put the panels in their default places the first time the window appears."""
        super().showEvent(event)
        if self._sizes_pending:
            self._sizes_pending = False
            self.arrange_panels()

    def _table_width(self) -> int:
        """Width the figures panel needs to show every column without scrolling."""
        t = self.table
        t.resizeColumnsToContents()
        columns = sum(t.columnWidth(c) for c in range(t.columnCount()))
        if t.columnCount() == 0:
            columns = 2 * (t.fontMetrics().horizontalAdvance("0.09686 LSB ◆") + 30)
        return t.verticalHeader().sizeHint().width() + columns + t.verticalScrollBar().sizeHint().width() + 40

    def _fit_table(self) -> None:
        """Widen the figures panel for its columns (within 48 % of the window) unless the
        person has placed the panels themselves."""
        dock = self.dock_figures
        if self._user_sized or not self.isVisible() or dock.isFloating() or not dock.isVisible():
            return
        want = max(min(self._table_width(), int(self.width() * 0.48)), self._values_width())
        if want != dock.width():
            self.resizeDocks([dock], [want], Qt.Orientation.Horizontal)

    def last_file(self) -> Path | None:
        """The design file open when the window last closed, if it still exists."""
        last = self._memory.get("last_file")
        return Path(last) if isinstance(last, str) and Path(last).is_file() else None

    def memory(self) -> dict:
        """What is remembered for the next run."""
        return {
            "geometry": bytes(self.saveGeometry().toBase64()).decode(),
            "docks": bytes(self.saveState().toBase64()).decode(),
            "inl_line": self.plots.inl_line,
            "last_file": str(self.model.path) if self.model.path else None,
        }

    def shutdown(self) -> None:
        """Stop every worker (ours and the analysis views')."""
        self.pane.commit_pending()
        self.pane.shutdown()
        for view in self.views.values():
            stop = getattr(view, "shutdown", None)
            if stop is not None:
                stop()
        self.live.shutdown()

    def closeEvent(self, event: QCloseEvent) -> None:
        """Offer to save unsaved edits, remember the window, stop the workers."""
        if self.ask_before_closing and self.model.modified:
            where = f"to {self.model.path.name}" if self.model.path else "to this comparison in a file"
            answer = QMessageBox.question(
                self, APP_TITLE, f"Save the changes {where}?",
                QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard
                | QMessageBox.StandardButton.Cancel)
            if answer == QMessageBox.StandardButton.Cancel or (
                    answer == QMessageBox.StandardButton.Save and not self.save()):
                event.ignore()
                return
        if self.remember:
            save_memory(self.memory())
        self.files.closed()
        self.shutdown()
        event.accept()
