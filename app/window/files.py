"""The main window's file features: undo/redo of finished edits, recent files, crash copies, the
exports and the design-review report, as menu actions.

``MainWindow`` creates one :class:`FileFeatures` and tells it when a file was opened or saved and
when the window closes; everything else hooks onto the comparison state's one edit path.
"""

from __future__ import annotations

from pathlib import Path

import platformdirs
from PySide6.QtCore import QObject, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QGuiApplication, QKeySequence
from PySide6.QtWidgets import QFileDialog, QLineEdit, QMenu, QMessageBox, QSpinBox, QWidget

from rungwise.core import evaluate
from rungwise.core.designfile import DesignFile
from rungwise.core.errors import RungwiseError
from rungwise.core.targets import AnalysisSettings, Targets

from .autosave import Autosave, Recovered
from .comparison_state import with_colours
from .edit_history import EditHistory
from .memory import CONFIG_ENV, config_dir
from .recent_files import RecentFiles

AUTOSAVE_DELAY_MS = 1500
"""A crash copy is written this long after the last finished edit, ms."""

TABLE_FILTER = ("Excel workbook (*.xlsx);;CSV (*.csv);;Markdown (*.md);;HTML page (*.html)")


def state_folder() -> Path:
    """Where crash copies live: beside the settings when ``RUNGWISE_CONFIG_DIR`` is set (tests),
    else the user state folder (platformdirs)."""
    import os

    if os.environ.get(CONFIG_ENV):
        return config_dir() / "autosave"
    return Path(platformdirs.user_state_dir("rungwise", appauthor=False)) / "autosave"


class FileFeatures(QObject):
    """Undo/redo, recent files, crash copies, exports and the report for ``window``.

    ``folder`` holds the recent-files list; ``autosave_folder`` the crash copies (``None``: the
    window does not remember anything, so neither is kept).

    Signals
    -------
    report_written(object) — the review PDF (its ``Path``) was written.
    netlist_written(object) — a netlist made on the worker (its ``Path``) was written.
    """

    report_written = Signal(object)
    netlist_written = Signal(object)

    def __init__(self, window, folder: Path | None, autosave_folder: Path | None) -> None:
        super().__init__(window)
        self.window = window
        self.analysis_targets: DesignFile | None = None  # analysis and targets of the open file
        state = window.model.state
        self.history = EditHistory(lambda: (state.candidates, state.selected), self._restore, self)
        state.subscribe(self._on_state)
        self.history.clean_changed.connect(self._on_clean)
        self.recent = RecentFiles(folder) if folder is not None else None
        self.autosave = Autosave(autosave_folder) if autosave_folder is not None else None
        self._timer = QTimer(self, singleShot=True, interval=AUTOSAVE_DELAY_MS)
        self._timer.timeout.connect(self.write_crash_copy)
        self.runner = None  # a JobRunner for the report and netlists, made on first use
        self._report_path: Path | None = None
        self._netlist_path: Path | None = None
        self._build_actions()

    # --- edits ---------------------------------------------------------------------------------
    def _restore(self, snap, description: str) -> None:
        candidates, selected = snap
        self.window.model.state.apply_edit(candidates, description, selected=selected)

    def _on_state(self, change: str) -> None:
        if change == "candidates":
            self.history.record(self.window.model.state.last_description)
            if self.autosave is not None:
                self._timer.start()

    def _on_clean(self, clean: bool) -> None:
        model = self.window.model
        if model.modified == clean:
            model.set_file(model.path, modified=not clean)

    # --- what the window tells us ------------------------------------------------------------
    def opened(self, path: Path | None, doc: DesignFile | None) -> None:
        """A file (or the demo, ``path=None``) replaced the comparison: history starts afresh and
        the statistics view takes the file's trial count and seed."""
        self.analysis_targets = doc
        self.history.reset()
        pane = self.window.findChild(QWidget, "search_pane")
        if pane is not None:
            pane.load_file_tables(doc)
        trials, seed = self._stats_controls()
        if doc is not None and trials is not None and seed is not None:
            trials.setValue(doc.analysis.trials)
            seed.setText(str(doc.analysis.seed))
        if path is not None and self.recent is not None:
            self.recent.add(path)

    def open_failed(self, path: Path) -> None:
        """A file could not be opened: drop it from the recent list."""
        if self.recent is not None:
            self.recent.remove(path)

    def _stats_controls(self) -> tuple[QSpinBox | None, QLineEdit | None]:
        """The statistics view's trial count and seed fields (found by object name), if present."""
        view = getattr(self.window, "views", {}).get("stats_pane")
        if view is None:
            return None, None
        return (view.findChild(QSpinBox, "spin_stats_trials"),
                view.findChild(QLineEdit, "edit_stats_seed"))

    def analysis(self) -> AnalysisSettings:
        """Trials and seed to save: the statistics view's, else the open file's."""
        base = self.analysis_targets.analysis if self.analysis_targets else AnalysisSettings()
        trials, seed = self._stats_controls()
        try:
            return AnalysisSettings.from_dict({
                "trials": trials.value() if trials is not None else base.trials,
                "seed": int(seed.text().strip()) if seed is not None else base.seed})
        except (ValueError, RungwiseError):  # an unreadable seed field: keep the file's
            return base

    def document(self) -> DesignFile:
        """The comparison as a design file (the open file's targets, search question and other
        settings kept; the prices as the design-search view holds them)."""
        state = self.window.model.state
        opened = self.analysis_targets
        settings = dict(opened.settings) if opened is not None else {}
        settings["colours"] = [c.colour for c in state.candidates]
        pane = self.window.findChild(QWidget, "search_pane")
        cost = opened.cost if opened is not None else None
        if pane is not None and pane.cost.to_dict():
            cost = pane.cost
        return DesignFile(candidates=state.designs, settings=settings, analysis=self.analysis(),
                          targets=opened.targets if opened is not None else Targets(),
                          search=opened.search if opened is not None else None, cost=cost)

    def saved(self, path: Path) -> None:
        """The comparison was written to ``path``."""
        self.history.mark_saved()
        if self.recent is not None:
            self.recent.add(path)
        if self.autosave is not None:
            self._timer.stop()
            self.autosave.discard()

    def closed(self) -> None:
        """The window closes normally: no crash copy is left behind, no report job running."""
        self._timer.stop()
        if self.runner is not None:
            self.runner.shutdown()
        if self.autosave is not None:
            self.autosave.discard()

    # --- crash copies --------------------------------------------------------------------------
    def write_crash_copy(self) -> None:
        """Write the crash copy now (only while there are unsaved edits)."""
        if self.autosave is not None and self.window.model.modified:
            self.autosave.write(self.document(), self.window.model.path)

    def orphans(self) -> list[Recovered]:
        """Crash copies left by programs that stopped without closing."""
        return self.autosave.orphans() if self.autosave is not None else []

    def recover(self, found: Recovered) -> None:
        """Put a crash copy's comparison in the window (unsaved, tied to its original file)."""
        colours = found.doc.settings.get("colours", [])
        self.window.model.replace_all(with_colours(found.doc.candidates[:4],
                                                   colours if isinstance(colours, list) else []),
                                      found.source, "restore the unsaved comparison")
        self.opened(None, found.doc)
        self.history.mark_unsaved()
        self.window.model.set_file(found.source, modified=True)
        found.copy.unlink(missing_ok=True)
        self.write_crash_copy()

    def offer_recovery(self) -> None:
        """Ask whether to restore the newest crash copy (others are kept for a later start); say
        which copies could not be read and where they were set aside."""
        found = self.orphans()
        if found:
            self._ask_to_restore(found[0])
        aside = self.autosave.set_aside if self.autosave is not None else []
        for path, reason in aside:
            self.window.show_problem(f"A copy of unsaved work could not be read and was not "
                                     f"restored:\n{reason}\nIt is kept as {path}.")
        aside.clear()

    def _ask_to_restore(self, newest: Recovered) -> None:
        where = f" of {newest.source.name}" if newest.source else ""
        answer = QMessageBox.question(
            self.window, "Restore unsaved work",
            f"Rungwise stopped without closing last time. Restore the unsaved comparison{where}?",
            QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.Discard)
        if answer == QMessageBox.StandardButton.Yes:
            self.recover(newest)
        else:
            newest.copy.unlink(missing_ok=True)

    # --- menus ---------------------------------------------------------------------------------
    def _menu(self, title: str) -> QMenu:
        for act in self.window.menuBar().actions():
            if act.menu() is not None and act.text().replace("&", "") == title:
                return act.menu()
        return self.window.menuBar().addMenu(title)

    def _build_actions(self) -> None:
        w = self.window
        edit = self._menu("Edit")
        self.action_undo = self.history.stack.createUndoAction(self, "&Undo")
        self.action_undo.setShortcut(QKeySequence.StandardKey.Undo)
        self.action_undo.setObjectName("action_undo")
        self.action_redo = self.history.stack.createRedoAction(self, "&Redo")
        self.action_redo.setShortcut(QKeySequence.StandardKey.Redo)
        self.action_redo.setObjectName("action_redo")
        first = edit.actions()[0] if edit.actions() else None
        edit.insertActions(first, [self.action_undo, self.action_redo])
        edit.insertSeparator(first)

        file_menu = self._menu("File")
        anchor = next((a for a in file_menu.actions() if a.objectName() == "action_save"), None)
        self.recent_menu = QMenu("Open &recent", w, objectName="menu_recent")
        self.recent_menu.aboutToShow.connect(self._fill_recent)
        file_menu.insertMenu(anchor, self.recent_menu)
        export = QMenu("&Export", w, objectName="menu_export")
        for text, slot, name in (
                ("Figures &table (XLSX, CSV, Markdown, HTML)…", self.export_table_dialog,
                 "action_export_table"),
                ("&Per-code values (CSV)…", self.export_per_code_dialog, "action_export_per_code"),
                ("&Bill of materials (CSV)…", self.export_bom_dialog, "action_export_bom"),
                ("All p&lots to a folder (PNG and SVG)…", self.export_plots_dialog,
                 "action_export_plots"),
                ("Design-&review report (PDF)…", self.report_dialog, "action_report"),
                ("&Netlist for a circuit simulator (SPICE)…", self.netlist_dialog,
                 "action_export_netlist")):
            act = QAction(text, w, objectName=name)
            act.triggered.connect(slot)
            export.addAction(act)
        quit_action = next((a for a in file_menu.actions() if a.objectName() == "action_quit"), None)
        file_menu.insertMenu(quit_action, export)

    def _fill_recent(self) -> None:
        self.recent_menu.clear()
        files = self.recent.files() if self.recent is not None else []
        for p in files:
            act = self.recent_menu.addAction(p.name)
            act.setToolTip(str(p))
            act.triggered.connect(lambda _c=False, path=p: self.window.open_file(path))
        if not files:
            self.recent_menu.addAction("(none)").setEnabled(False)

    # --- exports -------------------------------------------------------------------------------
    def _evaluations(self):
        """Every candidate's evaluation: the live results' where they hold it (no second solve on
        the GUI thread), evaluated here only where they do not."""
        return [self.window.live.evaluation_of(d) or evaluate(d)
                for d in self.window.model.state.designs]

    def _ask(self, title: str, name: str, filters: str) -> Path | None:
        start = str((self.window.model.path.parent if self.window.model.path else Path.cwd()) / name)
        path, _ = QFileDialog.getSaveFileName(self.window, title, start, filters)
        return Path(path) if path else None

    def _run(self, what: str, job) -> bool:
        QGuiApplication.setOverrideCursor(Qt.CursorShape.WaitCursor)
        try:
            job()
        except (OSError, ValueError, RungwiseError) as exc:
            self.window.show_problem(f"Could not write {what}:\n{exc}")
            return False
        finally:
            QGuiApplication.restoreOverrideCursor()
        self.window.status_text.setText(f"Wrote {what}")
        return True

    def export_table(self, path: Path) -> bool:
        """Write the figures table; the format follows the extension."""
        from ..export.tables import write_table

        return self._run(str(path), lambda: write_table(path, self._evaluations()))

    def export_per_code(self, path: Path) -> bool:
        """Write every code's values as CSV."""
        from ..export.tables import per_code_csv, write_text

        return self._run(str(path), lambda: write_text(path, per_code_csv(self._evaluations())))

    def export_bom(self, path: Path) -> bool:
        """Write the bill of materials of every candidate as CSV."""
        from ..export.tables import bom_csv, write_text

        return self._run(str(path), lambda: write_text(path, bom_csv(self._evaluations())))

    def export_plots(self, folder: Path) -> bool:
        """Write every plot as PNG and SVG into ``folder``."""
        from ..plots.export import export_plots

        return self._run(str(folder), lambda: export_plots(self._evaluations(), folder))

    def write_report(self, path: Path, with_stats: bool = True) -> None:
        """Write the design-review PDF: figures and statistics (the file's seed) are gathered on a
        worker thread, the PDF is printed here when they arrive (``report_written`` then)."""
        from ..export.report_content import gather

        doc = self.document()
        title = f"Design review: {self.window.model.path.stem}" if self.window.model.path \
            else "Design review"
        self._jobs()
        self._report_path = Path(path)
        source = self.window.model.path.name if self.window.model.path else ""
        known = [self.window.live.evaluation_of(d) for d in doc.candidates]
        self.runner.submit("report", lambda cancel: gather(doc, title, with_stats, cancel,
                                                           source=source, evaluations=known))
        self.window.status_text.setText(f"Preparing the report {Path(path).name}"
                                        + (" (statistics running)…" if with_stats else "…"))

    def _jobs(self):
        """The worker for the report and netlists (made on first use, one job at a time)."""
        if self.runner is None:
            from ..jobs.workers import JobRunner

            self.runner = JobRunner(self, max_threads=1)
            self.runner.finished.connect(self._on_job_done)
            self.runner.failed.connect(lambda channel, msg: self.window.show_problem(
                f"Could not prepare the {channel}:\n{msg}"))
        return self.runner

    def _on_job_done(self, channel: str, data) -> None:
        if channel == "netlist":
            self._on_netlist_ready(data)
        else:
            self._on_report_ready(channel, data)

    def _on_report_ready(self, _channel: str, data) -> None:
        from ..plots.report_pdf import write_report

        path = self._report_path
        if self._run(str(path), lambda: write_report(path, data)):
            self.report_written.emit(path)

    def export_table_dialog(self) -> None:
        """Ask for a file and write the figures table."""
        path = self._ask("Export the figures table", "comparison.xlsx", TABLE_FILTER)
        if path is not None:
            self.export_table(path if path.suffix else path.with_suffix(".xlsx"))

    def export_per_code_dialog(self) -> None:
        """Ask for a file and write the per-code values."""
        path = self._ask("Export per-code values", "per-code.csv", "CSV (*.csv)")
        if path is not None:
            self.export_per_code(path if path.suffix else path.with_suffix(".csv"))

    def export_bom_dialog(self) -> None:
        """Ask for a file and write the bill of materials."""
        path = self._ask("Export the bill of materials", "bill-of-materials.csv", "CSV (*.csv)")
        if path is not None:
            self.export_bom(path if path.suffix else path.with_suffix(".csv"))

    def export_plots_dialog(self) -> None:
        """Ask for a folder and write every plot."""
        folder = QFileDialog.getExistingDirectory(self.window, "Folder for the plots")
        if folder:
            self.export_plots(Path(folder))

    def report_dialog(self) -> None:
        """Ask for a file and write the design-review report."""
        path = self._ask("Write the design-review report", "review.pdf", "PDF (*.pdf)")
        if path is not None:
            self.write_report(path if path.suffix.lower() == ".pdf" else path.with_suffix(".pdf"))


    def export_netlist(self, path: Path, code: int | None) -> bool:
        """Write the edited candidate's netlist at ``code`` (every code when ``None``)."""
        from .netlist_export import write_netlist

        source = self.window.model.path.name if self.window.model.path else ""
        design = self.window.model.state.current.design
        return self._run(str(path), lambda: write_netlist(path, design, code, source))

    def write_netlist_in_background(self, path: Path, code: int | None) -> None:
        """Make the edited candidate's netlist on the worker (a 16-bit string takes a second or
        two), write it when it arrives (``netlist_written`` then)."""
        from .netlist_export import netlist_text

        source = self.window.model.path.name if self.window.model.path else ""
        design = self.window.model.state.current.design
        self._netlist_path = Path(path)
        self._jobs().submit("netlist", lambda _cancel: netlist_text(design, code, source))
        self.window.status_text.setText(f"Writing the netlist {Path(path).name}…")

    def _on_netlist_ready(self, text: str) -> None:
        from .netlist_export import save_text

        path = self._netlist_path
        if self._run(str(path), lambda: save_text(path, text)):
            self.window.status_text.setText(f"Wrote the netlist {path.name}")
            self.netlist_written.emit(path)

    def netlist_dialog(self) -> None:
        """Ask for the code and the file, then write the edited candidate's netlist."""
        from .netlist_export import NetlistDialog

        design = self.window.model.state.current.design
        dialog = NetlistDialog(design, self.window)
        if dialog.exec() != NetlistDialog.DialogCode.Accepted:
            return
        stem = "".join(c if c.isalnum() else "-" for c in design.label).strip("-") or "candidate"
        path = self._ask("Write the netlist", f"{stem}.cir", "SPICE netlist (*.cir *.sp)")
        if path is not None:
            self.write_netlist_in_background(path if path.suffix else path.with_suffix(".cir"),
                                             dialog.code)


def install(window: QWidget) -> FileFeatures:
    """Create the file features for ``window`` (persistent folders only when it remembers)."""
    remember = getattr(window, "remember", False)
    return FileFeatures(window, config_dir() if remember else None,
                        state_folder() if remember else None)
