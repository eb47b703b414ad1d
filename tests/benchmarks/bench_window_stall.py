"""Longest event-loop stall of the comparison window while the bit count is dragged 4 → 16.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_window_stall.py [--step-ms 60] [--all-bits]

The window (offscreen, 1366×768) compares four candidates. A 2 ms heartbeat timer records the gap
between its firings; the longest gap minus the period is the longest stall. The bit count of the
edited candidate is stepped from 4 to 16 through its spin box every ``--step-ms`` (as arrows held or
a wheel would do), then the window settles until the last results are drawn. With ``--all-bits``
the other three candidates are 16-bit too (the heaviest redraw). The baseline is the same heartbeat
on the idle window for the same time; target: longest stall < 50 ms. Both the wall-clock gap and the
GUI thread's own CPU time between beats are printed: on a machine busy with other work the first
also counts time the thread waited for a CPU.
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
os.environ.setdefault("RUNGWISE_CONFIG_DIR", tempfile.mkdtemp(prefix="rungwise-bench-"))

from PySide6.QtCore import QElapsedTimer, QTimer
from PySide6.QtWidgets import QApplication, QSpinBox

TARGET_MS = 50.0
"""Longest acceptable stall, ms."""


class Heartbeat:
    """Records the longest gap between firings of a fast timer."""

    def __init__(self, period_ms: int = 2) -> None:
        self.period = period_ms
        self.clock = QElapsedTimer()
        self.timer = QTimer(interval=period_ms)
        self.timer.timeout.connect(self._beat)
        self.longest = self.longest_cpu = 0.0
        self.last = self.last_cpu = 0.0

    def start(self) -> None:
        self.longest = self.longest_cpu = 0.0
        self.clock.start()
        self.last = 0.0
        self.last_cpu = time.thread_time() * 1e3
        self.timer.start()

    def _beat(self) -> None:
        now = self.clock.nsecsElapsed() / 1e6
        cpu = time.thread_time() * 1e3
        self.longest = max(self.longest, now - self.last - self.period)
        self.longest_cpu = max(self.longest_cpu, cpu - self.last_cpu)
        self.last, self.last_cpu = now, cpu

    def stop(self) -> tuple[float, float]:
        """Longest wall-clock gap and longest GUI-thread CPU time between beats, ms."""
        self.timer.stop()
        return self.longest, self.longest_cpu


def spin(app: QApplication, seconds: float, until=None) -> None:
    end = time.perf_counter() + seconds
    while time.perf_counter() < end:
        app.processEvents()
        if until is not None and until():
            return
        time.sleep(0.0005)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--step-ms", type=int, default=60, help="time between steps, ms")
    parser.add_argument("--all-bits", action="store_true", help="other candidates at 16 bits too")
    args = parser.parse_args()

    app = QApplication.instance() or QApplication([])
    from rungwise.app.window.main_window import MainWindow

    win = MainWindow(remember=False)
    win.ask_before_closing = False
    win.resize(1366, 768)
    win.show()
    state = win.model.state
    state.add()
    state.duplicate(0)
    if args.all_bits:
        for i in range(1, 4):
            state.set_design(i, state.candidates[i].design.replace(bits=16), "bench")
    state.set_design(0, state.candidates[0].design.replace(bits=4), "bench")
    state.select(0)
    spin(app, 30, until=lambda: win.live.latest is not None and not win.live.is_busy()
         and all(len(r.evaluation.codes) == 2 ** r.design.bits for r in win.live.latest.results))
    spin(app, 0.5)

    box = win.pane.findChild(QSpinBox, "spin_bits")
    beat = Heartbeat()
    steps = 16 - box.value()
    # baseline: the idle window for as long as the drag takes
    beat.start()
    spin(app, steps * args.step_ms / 1000 + 1.0)
    idle = beat.stop()

    beat.start()
    t0 = time.perf_counter()
    while box.value() < 16:
        box.stepUp()
        spin(app, args.step_ms / 1000)
    win.pane.commit_pending()
    spin(app, 60, until=lambda: not win.live.is_busy()
         and win.live.latest.results[0].design.bits == 16)
    spin(app, 0.3)
    busy = beat.stop()
    total = time.perf_counter() - t0

    shown = [len(r.evaluation.codes) for r in win.live.latest.results]
    print(f"candidates: {len(state.candidates)}, codes drawn at the end: {shown}")
    print(f"drag 4→16 bits in {steps} steps every {args.step_ms} ms, settled after {total:.2f} s")
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(f"machine: {os.cpu_count()} CPUs, load average {load:.1f} (a loaded machine stretches "
          "wall-clock gaps; the GUI thread's own CPU time between beats is shown beside them)")
    print(f"longest stall, idle window:    wall {idle[0]:7.1f} ms   GUI-thread CPU {idle[1]:6.1f} ms")
    print(f"longest stall, while dragging: wall {busy[0]:7.1f} ms   GUI-thread CPU {busy[1]:6.1f} ms"
          f"   ({busy[0] / max(idle[0], 0.1):.1f}× idle wall; target < {TARGET_MS:.0f} ms: "
          f"{'OK' if busy[0] < TARGET_MS else 'over'} wall, {'OK' if busy[1] < TARGET_MS else 'over'}"
          " CPU)")
    win.close()


if __name__ == "__main__":
    main()
