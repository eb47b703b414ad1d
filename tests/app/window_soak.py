"""A seeded random run of the window's user actions (the soak run), shared by its tests.

:class:`Soak` drives the real window through its widgets and menu actions — typing into fields,
choosing from lists, the candidate and edit menus, the statistics and trade-off views — and checks
after every action that the comparison is consistent. :class:`Guard` turns any Python exception
(``sys.excepthook``) or Qt warning (``qInstallMessageHandler``) into a failure of the action that
caused it. Every action is logged; a failure reports the seed and the log so it can be replayed.
"""

from __future__ import annotations

import builtins
import random
import re
import sys
import time
import traceback
from collections import Counter
from collections.abc import Callable
from pathlib import Path

from PySide6.QtCore import QEvent, Qt, QtMsgType, qInstallMessageHandler
from PySide6.QtGui import QAction, QKeyEvent
from PySide6.QtWidgets import QApplication, QComboBox, QLineEdit, QMessageBox, QSpinBox

from rungwise.app.window.binding import design_value, display_text
from rungwise.app.window.comparison_state import follow_network
from rungwise.app.window.edit_history import UNDO_LIMIT
from rungwise.app.window.main_window import STOPPED_TEXT
from rungwise.core.design import FIELDS, Design
from rungwise.core.diagnose.synthetic import sensor_bias_example
from rungwise.core.errors import DesignError
from rungwise.core.targets import MAX_SEED

GOOD = {
    "vref": ["3.3", "2.5 V", "5V", "-1.2", "1.024", "10", "3V3", "2.5v"],
    "unit_r": ["4k7", "10 kΩ", "1k", "22k", "100", "2M2", "47 kohm", "4R7", "4r7", "1meg", "2k2 Ohm"],
    "ron_high": ["0", "40", "25 Ω", "1k", "0.5"],
    "ron_low": ["0", "25", "12.5", "100m"],
    "ref_r": ["0", "1", "50 Ω", "2k"],
    "load_r": ["open", "100k", "1M", "10 kΩ", "inf"],
    "gain": ["1", "2", "-1", "0.5"],
    "feedback_r": ["", "10k", "4k7", "default"],
    "load_c": ["0", "10p", "1n", "100 pF"],
    "temperature_c": ["27", "-40", "85", "125", "300 K", "25 °C"],
    "bandwidth": ["1M", "10k", "100 kHz", "20e3"],
    "series_ratio": ["1", "1.02", "1.1", "0.98"],
}
"""Entries each field accepts (a valid design follows)."""

BAD = ["", "abc", "-5k", "1e30", "nan", "0", "--1", "4k7k", "1 %%", "-inf", "1e400", "  ", "½",
       "5 A", "10 kV", "40 F", "1 %", "3 Hz"]  # the last ones: units of other fields
"""Entries most fields refuse (some are valid for a few fields: the design decides)."""

NAMES = ["Option A", "", "  padded  ", "Ladder Ω", "x" * 60, "Segmented 6+6", "Option A"]
"""Names typed when renaming a candidate."""

PARTS_TEXT = {
    "tempco": ["100", "25 ppm", "1e-4", "-50", "", "abc", "nan", "inf", "1e9", "5%", "--3"],
    "temperature": ["-40", "85", "", "abc", "1e6", "-300", "125"],
    "limit": ["1m", "20k", "2u", "0.01", "", "abc", "-1", "0", "1e400"],
}
"""Entries typed into the Parts view's fields (its own parser decides which are accepted)."""

EXPECTED_MESSAGES = ("Four candidates are compared already",)
"""Message boxes a person may legitimately meet during the run (others are failures)."""

LEFT = Qt.MouseButton.LeftButton

INTERNAL_ERROR = re.compile(r"\b(" + "|".join(
    name for name in dir(builtins) if isinstance(getattr(builtins, name), type)
    and issubclass(getattr(builtins, name), Exception)) + r"|LinAlgError)\b")
"""Python's own exception names: a view that shows one leaked an internal failure."""

PLATFORM_NOTES = ("This plugin does not support propagateSizeHints()",)
"""Qt messages of the offscreen test platform itself (a window's size hints have nowhere to go
without a screen), not of the program; every other warning fails the run."""

WARNING_TYPES = {QtMsgType.QtWarningMsg, QtMsgType.QtCriticalMsg, QtMsgType.QtFatalMsg}


def type_text(qtbot, widget, text: str) -> None:
    """Type ``text`` into ``widget`` key by key (QTest types ASCII only; other characters, such as
    Ω or µ, arrive as key events carrying the text, as an input method delivers them)."""
    run = ""
    for ch in text + "\0":
        if ch.isascii() and ch != "\0":
            run += ch
            continue
        if run:
            qtbot.keyClicks(widget, run)
            run = ""
        if ch != "\0":
            for kind in (QEvent.Type.KeyPress, QEvent.Type.KeyRelease):
                QApplication.sendEvent(widget, QKeyEvent(kind, 0, Qt.KeyboardModifier.NoModifier, ch))


class Guard:
    """Collects Python exceptions and Qt warnings while active (a context manager)."""

    def __init__(self) -> None:
        self.problems: list[str] = []
        self._old_hook = None
        self._old_handler = None

    def __enter__(self) -> Guard:
        self._old_hook = sys.excepthook
        sys.excepthook = self._hook
        self._old_handler = qInstallMessageHandler(self._message)
        return self

    def __exit__(self, *exc) -> None:
        sys.excepthook = self._old_hook
        qInstallMessageHandler(self._old_handler)

    def _hook(self, kind, value, tb) -> None:
        self.problems.append("exception: " + "".join(traceback.format_exception(kind, value, tb)))

    def _message(self, kind, context, text) -> None:
        if kind in WARNING_TYPES and text not in PLATFORM_NOTES:
            self.problems.append(f"Qt {kind.name}: {text}")
        if self._old_handler is not None:
            self._old_handler(kind, context, text)


class Soak:
    """Random user actions on ``window`` from ``seed``; :meth:`run` does ``n`` of them."""

    def __init__(self, window, qtbot, seed: int, folder: Path) -> None:
        self.w, self.qtbot, self.seed, self.folder = window, qtbot, seed, folder
        self.rng = random.Random(seed)
        self.pane = window.pane
        self.inputs = window.pane.binder.inputs
        self.stats = window.views["stats_pane"]
        self.explorer = window.views["explorer_pane"]
        self.log: list[str] = []
        self.counts: Counter[str] = Counter()
        self.seconds: Counter[str] = Counter()
        self.messages: Counter[str] = Counter()
        self.past: list[tuple] = []   # what undo should bring back, oldest first
        self.future: list[tuple] = []  # what redo should bring back
        self.actions: list[tuple[str, int, Callable[[], str]]] = [
            ("type", 30, self.type_entry),
            ("spin", 8, self.spin_entry),
            ("choose", 8, self.choose),
            ("add", 4, self.add),
            ("duplicate", 3, self.duplicate),
            ("remove", 5, self.remove),
            ("rename", 3, self.rename),
            ("select", 5, self.select),
            ("undo", 6, self.undo),
            ("redo", 4, self.redo),
            ("tab", 4, self.tab),
            ("statistics", 2, self.statistics),
            ("sweep", 3, self.sweep),
            ("inl line", 1, self.inl_line),
            ("stop", 2, self.stop),
            ("compute", 1, self.compute),
            ("seed", 1, self.seed_entry),
            ("colour", 1, self.colour),
            ("file", 1, self.file),
            ("parts", 3, self.parts),
            ("board", 2, self.board),
            ("skew", 2, self.skew),
        ]
        self.parts_view = window.views["parts_pane"]
        self.board_view = window.views["diagnose_pane"]
        self._fresh_history = False

    # --- running --------------------------------------------------------------------------------
    @property
    def state(self):
        return self.w.model.state

    def run(self, n: int, guard: Guard) -> None:
        """Do ``n`` random actions; on any failure raise AssertionError with the seed and the log."""
        names = [a[0] for a in self.actions]
        weights = [a[1] for a in self.actions]
        fns = {a[0]: a[2] for a in self.actions}
        first = self.rng.sample(names, len(names))  # every kind once, then at random
        for i in range(n):
            if i < len(first):
                name = first[i]
            elif self.future and self.rng.random() < 0.3:
                name = "redo"  # right after an undo, as people do
            else:
                name = self.rng.choices(names, weights)[0]
            before = self.state.candidates
            self.log.append(f"{i}: {name}")
            start = time.perf_counter()
            try:
                self.say(fns[name]())
                took = time.perf_counter() - start
                self.say(f"[{took * 1e3:.0f} ms]")
                self.counts[name] += 1
                self.seconds[name] += took
                if self._fresh_history:  # a file opened or a new comparison: nothing to undo
                    self.past.clear()
                    self.future.clear()
                    self._fresh_history = False
                elif name not in {"undo", "redo"} and self.state.candidates != before:
                    self._recorded(before)
                self.dismiss_messages()
                self.check_consistent()
            except Exception as exc:  # add the replay information to any failure
                self.say("FAILED")
                raise AssertionError(self.report(f"{type(exc).__name__}: {exc}")) from exc
            if guard.problems:
                raise AssertionError(self.report("\n".join(guard.problems)))

    def say(self, text: str) -> None:
        """Add ``text`` to the log line of the running action."""
        self.log[-1] += f" {text}"

    def report(self, what: str, last: int = 60) -> str:
        """The failure with the seed and the last ``last`` actions."""
        return (f"soak run failed after {len(self.log)} actions (seed {self.seed}; replay with "
                f"RUNGWISE_SOAK_SEED={self.seed} RUNGWISE_SOAK_ACTIONS={len(self.log)}):\n{what}\n"
                "last actions:\n  " + "\n  ".join(self.log[-last:]))

    def _recorded(self, before: tuple) -> None:
        self.past.append(before)
        del self.past[:-UNDO_LIMIT]
        self.future.clear()

    # --- invariants -----------------------------------------------------------------------------
    def check_consistent(self) -> None:
        """Between actions: 1 … 4 candidates, the pane shows the selected one, actions enabled
        as they should be, the list shows every name."""
        state, w = self.state, self.w
        assert 1 <= len(state.candidates) <= 4
        assert self.pane.design == state.current.design
        assert w.action_add.isEnabled() == state.can_add()
        assert w.action_remove.isEnabled() == (len(state.candidates) > 1)
        lst = w.candidates_pane.list
        assert [lst.item(i).text() for i in range(lst.count())] == [c.name for c in state.candidates]
        assert lst.currentRow() == state.selected
        assert not self.pane.has_pending()
        for label in (self.stats.label_status, self.explorer.label_status,
                      self.parts_view.label_status, w.status_text):
            found = INTERNAL_ERROR.search(label.text())
            assert found is None, f"an internal error is shown: {label.text()!r}"
        assert w.model.modified == (not w.files.history.is_clean())
        assert w.isWindowModified() == w.model.modified

    def dismiss_messages(self) -> None:
        """Close message boxes as a person pressing OK would; unexpected ones fail the run."""
        for box in QApplication.topLevelWidgets():
            if isinstance(box, QMessageBox) and box.isVisible():
                text = box.text()
                self.messages[text.splitlines()[0]] += 1
                box.button(QMessageBox.StandardButton.Ok).click()
                assert text.startswith(EXPECTED_MESSAGES), f"unexpected message: {text}"

    # --- the values pane ------------------------------------------------------------------------
    def _expect(self, key: str, text: str) -> Design | None:
        current = self.state.current
        try:
            if key == "topology":
                design = current.design.replace(topology=text)
            else:
                design = current.design.with_settings({key: text})
        except DesignError:
            return None
        taken = [c.name for c in self.state.candidates if c is not current]
        return follow_network(current, design, taken)  # a name the program gave follows

    def _check_outcome(self, key: str, before: Design, expected: Design | None) -> str:
        after = self.state.current.design
        binder = self.pane.binder
        if expected is None:
            assert after == before
            assert binder.is_refused(key), f"{key} was not marked refused"
            label = binder.error_label(key)
            text = label.text() if label is not None else ""
            allowed = FIELDS[key].describe() if key in FIELDS else "choose"
            assert label is not None
            assert not label.isHidden(), f"{key}: the range message is hidden"
            assert allowed in text or "allowed: " in text, f"{key}: no range message ({text!r})"
            return "refused"
        got, want = after.to_dict(), expected.to_dict()
        assert got == want, {k: (got.get(k), want.get(k)) for k in {*got, *want}
                             if got.get(k) != want.get(k)}
        assert not binder.is_refused(key)
        for k, widget in self.inputs.items():
            if binder.is_refused(k):
                continue
            if isinstance(widget, QLineEdit):
                assert widget.text() == display_text(after, k), k
            elif isinstance(widget, QSpinBox):
                assert widget.value() == design_value(after, k), k
            elif isinstance(widget, QComboBox) and widget.currentData() is not None:
                assert widget.currentData() == display_text(after, k), k
        return "applied"

    def _enabled(self, kind) -> list[str]:
        """Keys of the pane's widgets of ``kind`` a person can use now (unused ones are greyed)."""
        return sorted(k for k, wdg in self.inputs.items() if isinstance(wdg, kind) and wdg.isEnabled())

    def type_entry(self) -> str:
        """Type a valid or invalid entry into a text field and press Enter."""
        keys = self._enabled(QLineEdit)
        key = self.rng.choice(keys)
        pool = GOOD.get(key, ["1", "2.5"])
        text = self.rng.choice(pool) if self.rng.random() < 0.6 else self.rng.choice(BAD)
        self.say(f"{key}={text!r}")
        before = self.state.current.design
        expected = self._expect(key, text)
        edit = self.inputs[key]
        edit.selectAll()
        self.qtbot.keyClick(edit, Qt.Key.Key_Backspace)
        if text:
            type_text(self.qtbot, edit, text)
        self.qtbot.keyClick(edit, Qt.Key.Key_Return)
        return self._check_outcome(key, before, expected)

    def spin_entry(self) -> str:
        """Change a whole-number field with the arrow keys or by typing a number and Enter."""
        key = self.rng.choice(self._enabled(QSpinBox))
        spin: QSpinBox = self.inputs[key]
        before = self.state.current.design
        if self.rng.random() < 0.4:
            up = self.rng.random() < 0.5
            if (up and spin.value() >= 12 and key == "bits") or spin.value() == spin.minimum():
                up = spin.value() == spin.minimum()
            target = spin.value() + (1 if up else -1)
            how = "up" if up else "down"
            self.qtbot.keyClick(spin, Qt.Key.Key_Up if up else Qt.Key.Key_Down)
            self.pane.commit_pending()  # the pause after the last step
        else:
            roll = self.rng.random()
            if roll < 0.12:  # typed outside the box's range: refused visibly, never clamped
                target = self.rng.choice([spin.maximum() + self.rng.randint(1, 80),
                                          spin.minimum() - self.rng.randint(1, 9)])
                how = "typed"
                spin.selectAll()
                self.qtbot.keyClicks(spin, str(target))
                assert spin.lineEdit().text() == str(target), "the box changed the typing"
                self.qtbot.keyClick(spin, Qt.Key.Key_Return)
                return f"{key} {how} {target} " + self._check_outcome(key, before, None)
            if key == "bits" and before.topology == "string" and roll < 0.3:
                high = 20  # past a string's 16 bits: refused with its range
            else:
                high = 16 if roll > 0.9 else 12  # now and then a large network
            target = self.rng.randint(spin.minimum(), high)
            how = "typed"
            spin.selectAll()
            self.qtbot.keyClicks(spin, str(target))
            self.qtbot.keyClick(spin, Qt.Key.Key_Return)
        if target == design_value(before, key) and not self.pane.binder.is_refused(key):
            assert self.state.current.design == before
            return f"{key} {how} {target} unchanged"
        expected = self._expect(key, str(target))
        return f"{key} {how} {target} " + self._check_outcome(key, before, expected)

    def choose(self) -> str:
        """Pick an entry of one of the pane's lists (network, output, and any other bound list)."""
        key = self.rng.choice(self._enabled(QComboBox))
        combo: QComboBox = self.inputs[key]
        index = self.rng.randrange(combo.count())
        value = combo.itemData(index)
        self.say(f"{key}={value}")
        before = self.state.current.design
        same = str(value) == display_text(before, key) and not self.pane.binder.is_refused(key)
        expected = before if same else self._expect(key, str(value))  # the same choice: no edit
        combo.setCurrentIndex(index)
        combo.activated.emit(index)
        return self._check_outcome(key, before, expected)

    # --- candidates -----------------------------------------------------------------------------
    def _trigger(self, action, button) -> str:
        """Trigger a menu action, its keyboard shortcut or the pane's button (chosen at random)."""
        roll = self.rng.random()
        if roll < 0.4:
            action.trigger()
            return "menu"
        if roll < 0.7 and button is not None:
            if button.isEnabled():
                self.qtbot.mouseClick(button, LEFT)
            return "button"
        self._shortcut(action)
        return "key"

    def _shortcut(self, action) -> None:
        """Press the action's shortcut in the window, as the keyboard would."""
        combo = action.shortcut()[0]
        self._activate()
        self.qtbot.keyClick(self.w, combo.key(), combo.keyboardModifiers())

    def _activate(self) -> None:
        """Bring the window to the front (a closed message box leaves no active window offscreen)."""
        if QApplication.activeWindow() is not self.w:
            self.w.activateWindow()
            self.qtbot.waitUntil(lambda: QApplication.activeWindow() is self.w, timeout=60000)

    def add(self) -> str:
        n, could = len(self.state.candidates), self.state.can_add()
        how = self._trigger(self.w.action_add, self.w.candidates_pane.button_add)
        assert len(self.state.candidates) == n + (1 if could else 0)
        if could:
            assert self.state.selected == n
        return f"by {how} → {len(self.state.candidates)}"

    def duplicate(self) -> str:
        n, could = len(self.state.candidates), self.state.can_add()
        source = self.state.current.design
        how = self._trigger(self.w.action_duplicate, self.w.candidates_pane.button_duplicate)
        assert len(self.state.candidates) == n + (1 if could else 0)
        if could:
            copy = self.state.current.design
            assert copy.replace(name="").to_dict() == source.replace(name="").to_dict()
        return f"by {how} → {len(self.state.candidates)}"

    def remove(self) -> str:
        n = len(self.state.candidates)
        gone = self.state.current.name
        how = self._trigger(self.w.action_remove, self.w.candidates_pane.button_remove)
        assert len(self.state.candidates) == max(n - 1, 1)
        return f"{gone!r} by {how} → {len(self.state.candidates)}"

    def rename(self) -> str:
        """Rename through the list's editor (F2 / the menu), typing the name and Enter."""
        name = self.rng.choice(NAMES)
        index = self.state.selected
        want = self.state.current.design.replace(name=name.strip()).label
        action = self.w.findChild(QAction, "action_rename")
        if self.rng.random() < 0.5:
            self.say("by menu")
            action.trigger()
        else:
            self.say("by key")
            self._shortcut(action)
        lst = self.w.candidates_pane.list
        editors = [e for e in lst.findChildren(QLineEdit) if e.isVisible()]
        assert len(editors) == 1, "no name editor opened"
        editor = editors[0]
        editor.selectAll()
        self.qtbot.keyClick(editor, Qt.Key.Key_Backspace)
        if name:
            type_text(self.qtbot, editor, name)
        self.qtbot.keyClick(editor, Qt.Key.Key_Return)
        self.qtbot.waitUntil(lambda: not any(e.isVisible() for e in lst.findChildren(QLineEdit)),
                             timeout=60000)
        assert self.state.candidates[index].name == want
        return f"{index} to {name!r}"

    def colour(self) -> str:
        """Give the selected candidate another colour from the Colour button's menu."""
        menu = self.w.candidates_pane.button_colour.menu()
        action = self.rng.choice([a for a in menu.actions() if a.text().startswith("#")])
        action.trigger()
        assert self.state.current.colour == action.text()
        return action.text()

    def file(self) -> str:
        """Save and open again, save only, or start again from the demo (as the File menu does
        after its dialog)."""
        roll = self.rng.random()
        if roll < 0.25:
            self._shortcut(self.w.findChild(QAction, "action_new"))
            self._fresh_history = True
            assert not self.w.model.modified
            return "new from the demo"
        path = self.folder / f"soak-{self.rng.randrange(3)}.rwd.toml"
        saved = self.state.candidates
        assert self.w.save_to(path)
        assert not self.w.model.modified
        if roll < 0.6:
            return f"saved {path.name}"
        assert self.w.open_file(path)
        self._fresh_history = True
        # designs, names and colours as saved (a name read from a file counts as the person's)
        assert [(c.design, c.colour) for c in self.state.candidates] == [
            (c.design, c.colour) for c in saved]
        assert not self.w.model.modified
        return f"saved and opened {path.name}"

    def select(self) -> str:
        n = len(self.state.candidates)
        if self.rng.random() < 0.5:
            row = self.rng.randrange(n)
            self.w.candidates_pane.list.setCurrentRow(row)
            assert self.state.selected == row
            return f"row {row}"
        start = self.state.selected
        self._activate()
        self.qtbot.keyClick(self.w, Qt.Key.Key_PageDown, Qt.KeyboardModifier.ControlModifier)
        assert self.state.selected == (start + 1) % n
        return f"next → {self.state.selected}"

    # --- undo and redo --------------------------------------------------------------------------
    def undo(self) -> str:
        return self._step(self.w.files.action_undo, self.past, self.future, "undo")

    def redo(self) -> str:
        return self._step(self.w.files.action_redo, self.future, self.past, "redo")

    def _step(self, action, source: list, target: list, word: str) -> str:
        """Undo or redo: the comparison must become the last one in ``source`` (my own record)."""
        before = self.state.candidates
        how = self._trigger(action, None)
        if not source:
            assert self.state.candidates == before
            return f"by {how}: nothing to {word}"
        assert self.state.candidates == source.pop(), f"{word} did not bring back the comparison"
        target.append(before)
        return f"by {how} ({len(self.past)} to undo)"

    # --- views ----------------------------------------------------------------------------------
    def _show_tab(self, key: str) -> None:
        tabs = self.w.tabs
        for i in range(tabs.count()):
            holder = tabs.widget(i)
            if holder is self.w.plots or holder.widget().view is not self.w.views.get(key):
                continue
            tabs.setCurrentIndex(i)
            return
        raise AssertionError(f"no tab shows {key}")

    def tab(self) -> str:
        i = self.rng.randrange(self.w.tabs.count())
        self.w.tabs.setCurrentIndex(i)
        return self.w.tabs.tabText(i)

    def inl_line(self) -> str:
        which = self.rng.choice(["endpoint", "bestfit"])
        action = self.w.action_inl_endpoint if which == "endpoint" else self.w.action_inl_bestfit
        self._shortcut(action)
        assert self.w.plots.inl_line == which
        return which

    def stop(self) -> str:
        """Press Esc (Stop computing) — often while the figures of the last edit are on their way."""
        busy = self.w.live.is_busy()
        self._shortcut(self.w.findChild(QAction, "action_stop"))
        assert not self.w.live.is_busy()
        latest = self.w.live.latest
        if latest is None or [r.design for r in latest.results] != self.state.designs:
            assert self.w.status_text.text() == STOPPED_TEXT  # earlier values on screen, said so
            return ("while computing" if busy else "idle") + ", earlier values shown"
        return "while computing" if busy else "idle"

    def compute(self) -> str:
        """Press F5 (Compute again) and wait for the figures of the shown candidates."""
        self._shortcut(self.w.findChild(QAction, "action_compute"))
        self.qtbot.waitUntil(lambda: not self.w.live.is_busy(), timeout=30000)
        assert [r.design for r in self.w.live.latest.results] == self.state.designs
        return "done"

    def seed_entry(self) -> str:
        """Type a seed (valid or not) in the statistics view and press Run."""
        view = self.stats
        self._show_tab("stats_pane")
        text = self.rng.choice(["7", "x1", "-3", "99999999999", "", "12", str(2**63)])
        view.spin_trials.setValue(10)
        view.edit_seed.selectAll()
        self.qtbot.keyClick(view.edit_seed, Qt.Key.Key_Backspace)
        type_text(self.qtbot, view.edit_seed, text)
        self.qtbot.mouseClick(view.button_run, LEFT)
        if text.isdigit() and int(text) <= MAX_SEED:
            assert view.label_seed.text().startswith(f"Seed {text} ")
            outcome = self._finish_or_cancel(view, "statistics", view.result_changed)
            return f"{text!r} run, {outcome}"
        assert view.label_status.text().startswith("Seed: a whole number from 0 to")
        return f"{text!r} refused"

    def parts(self) -> str:
        """On the Parts tab: a series, temperature coefficients or range typed (valid or not),
        limits typed and Suggest, a suggested value or the series choice added as a candidate."""
        view = self.parts_view
        self._show_tab("parts_pane")
        roll = self.rng.random()
        if roll < 0.2:
            i = self.rng.randrange(view.combo_series.count())
            view.combo_series.setCurrentIndex(i)
            note = f"series {view.combo_series.itemText(i)}"
        elif roll < 0.45:
            role = self.rng.choice(sorted(view.tempco_edits))
            text = self.rng.choice(PARTS_TEXT["tempco"])
            self._enter(view.tempco_edits[role], text)
            note = f"tempco {role}={text!r}"
        elif roll < 0.6:
            edit = self.rng.choice([view.edit_temp_low, view.edit_temp_high])
            text = self.rng.choice(PARTS_TEXT["temperature"])
            self._enter(edit, text)
            note = f"{edit.objectName()}={text!r}"
        elif roll < 0.85:
            key = self.rng.choice(sorted(view.limit_edits))
            text = self.rng.choice(PARTS_TEXT["limit"])
            self._enter(view.limit_edits[key], text)
            self.qtbot.mouseClick(view.button_suggest, LEFT)
            self._parts_idle()
            note = f"limit {key}={text!r}, suggest: {view.label_status.text()!r}"
            rows = view.table_suggest.rowCount()
            if rows and self.rng.random() < 0.5:
                view.table_suggest.selectRow(self.rng.randrange(rows))
                note += self._parts_adds(view.button_use_value)
        else:
            note = "add the series choice" + self._parts_adds(view.button_use_series)
        self._parts_idle()
        return note + f" → {view.label_status.text()!r}"

    def board(self) -> str:
        """On the Built board tab: load a measurement (as its file dialog would hand it over; now
        and then a damaged one), pick the built candidate, trust offset and gain or not, and add the
        as-built design as a candidate."""
        view = self.board_view
        self._show_tab("diagnose_pane")
        roll = self.rng.random()
        refused = False
        if roll < 0.4 or view._measurement is None:
            text = sensor_bias_example()
            damage = self.rng.choice(["", "", "cut", "garbage"])
            if damage == "cut":
                text = text[: len(text) // 3] + "\n12, x\n"
            elif damage == "garbage":
                text = "code;volts\n\x00\x01 nonsense\n"
            path = self.folder / f"board-{damage or 'good'}.csv"
            path.write_text(text, encoding="utf-8")
            ok = view.load_measurement(path)
            refused = not ok
            note = f"load {path.name}: {'read' if ok else 'refused'}"
        elif roll < 0.7:
            i = self.rng.randrange(view.combo_design.count())
            view.combo_design.setCurrentIndex(i)
            note = f"built candidate {i}"
        elif roll < 0.85:
            view.check_absolute.toggle()
            note = f"absolute {view.check_absolute.isChecked()}"
        else:
            view.repair.check_repair.toggle()
            note = f"repair plan {view.repair.check_repair.isChecked()}"
        self.qtbot.waitUntil(lambda: not view.runner.is_busy("diagnose"), timeout=60000)
        if refused:  # the refusal stays in view
            assert view.label_status.text().startswith("Cannot use this file: ")
        if view.button_use.isEnabled() and self.rng.random() < 0.3:
            n, could = len(self.state.candidates), self.state.can_add()
            self.qtbot.mouseClick(view.button_use, LEFT)
            assert len(self.state.candidates) == n + (1 if could else 0)
            note += ", used as candidate"
        assert not view.label_status.text().startswith("Cannot analyse: Internal error")
        return note + f" → {view.label_status.text()[:80]!r}"

    def skew(self) -> str:
        """"Make it monotonic by design" on the selected candidate; apply the answer now and then
        (an ordinary edit: undo takes it back)."""
        panel = self.pane.skew
        self.qtbot.mouseClick(panel.button_find, LEFT)
        self.qtbot.waitUntil(lambda: not panel.runner.is_busy("skew"), timeout=60000)
        text = panel.label.text()
        assert not text.startswith("Internal error"), text
        if panel.button_apply.isEnabled() and self.rng.random() < 0.5:
            ratio = panel._answer.ratio
            self.qtbot.mouseClick(panel.button_apply, LEFT)
            assert self.state.current.design.series_ratio == ratio
            return f"skew applied {ratio:.4f}"
        return f"skew: {text[:80]!r}"

    def _enter(self, edit: QLineEdit, text: str) -> None:
        edit.selectAll()
        self.qtbot.keyClick(edit, Qt.Key.Key_Backspace)
        type_text(self.qtbot, edit, text)
        self.qtbot.keyClick(edit, Qt.Key.Key_Return)

    def _parts_idle(self) -> None:
        runner = self.parts_view.runner
        self.qtbot.waitUntil(lambda: not runner.is_busy("parts") and not runner.is_busy("suggest"),
                             timeout=60000)

    def _parts_adds(self, button) -> str:
        n, could = len(self.state.candidates), self.state.can_add()
        self.qtbot.mouseClick(button, LEFT)
        added = len(self.state.candidates) - n
        assert added in ((0, 1) if could else (0,))
        return ", added" if added else ", not added"

    def _finish_or_cancel(self, view, channel: str, done_signal) -> str:
        """Cancel at once, cancel after the first progress, or wait for the result; a cancelled
        run says so and no view's run is left busy."""
        runner, button = view.runner, view.button_cancel
        roll = self.rng.random()
        if roll < 0.8:
            if roll >= 0.4:  # wait for the first progress (or the end) before cancelling
                seen: list[str] = []

                def note(got: str, _p) -> None:
                    seen.append(got)

                runner.progress.connect(note)
                try:
                    self.qtbot.waitUntil(lambda: channel in seen or not runner.is_busy(channel),
                                         timeout=60000)
                finally:
                    runner.progress.disconnect(note)
            when = "at once" if roll < 0.4 else "after progress"
            if not button.isEnabled():
                outcome = f"done before a cancel {when}"
            else:
                self.qtbot.mouseClick(button, LEFT)
                assert view.label_status.text() == "Cancelled"
                outcome = f"cancelled {when}"
        else:
            if runner.is_busy(channel):
                with self.qtbot.waitSignal(done_signal, timeout=120000):
                    pass
            outcome = "finished"
        assert not runner.is_busy(channel)
        assert not button.isEnabled()
        return outcome

    def statistics(self) -> str:
        """On the Statistics tab: a few boards, Run, then Cancel or wait for the result."""
        view = self.stats
        self._show_tab("stats_pane")
        trials = self.rng.choice([10, 20, 50])
        view.spin_trials.setValue(trials)
        view.edit_seed.setText(str(self.rng.randrange(1000)))
        self.qtbot.mouseClick(view.button_run, LEFT)
        assert view.label_seed.text().startswith(f"Seed {view.edit_seed.text()} · {trials} boards")
        return f"{trials} boards, " + self._finish_or_cancel(view, "statistics", view.result_changed)

    def sweep(self) -> str:
        """On the Trade-offs tab: a short sweep, Run, Cancel or finish, maybe add a point."""
        view = self.explorer
        self._show_tab("explorer_pane")
        over = self.rng.choice(["bits", "thermometer_bits"])
        view.combo_over.setCurrentIndex(view.combo_over.findData(over))
        low = self.rng.randint(2, 6)
        high = low + self.rng.randint(0, 3)
        view.spin_from.setValue(low)
        view.spin_to.setValue(high)
        view.check_stats.setChecked(self.rng.random() < 0.2)
        view.spin_trials.setValue(20)
        self.qtbot.mouseClick(view.button_run, LEFT)
        outcome = self._finish_or_cancel(view, "explorer", view.result_changed)
        note = f"{over} {low}…{high} {outcome}"
        if view.result is not None and self.rng.random() < 0.6:
            note += self._add_point(view, low, high)
        return note

    def _add_point(self, view, low: int, high: int) -> str:
        n, could = len(self.state.candidates), self.state.can_add()
        row = self.rng.randrange(max(view.combo_candidate.count(), 1))
        view.combo_candidate.setCurrentIndex(row)
        chosen = view.combo_candidate.currentText()
        value = self.rng.randint(low, high)
        view.spin_value.setValue(value)
        point = view.result.point(row, value)
        self.qtbot.mouseClick(view.button_add, LEFT)
        if point is None or point.design is None:
            assert len(self.state.candidates) == n
            return f", point {row}@{value} not addable"
        assert len(self.state.candidates) == n + (1 if could else 0)
        if could:
            added = self.state.current
            assert added.name.startswith(chosen), (added.name, chosen)
        return f", added {row}@{value}"
