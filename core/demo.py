"""The built-in demo: an invented scenario used when the program starts without a file.

An 8-bit setpoint DAC for a heater controller, driven straight from a 3.3 V microcontroller port:
10 kΩ unit resistors, port pins of about 40 Ω when driving high and 25 Ω when driving low (from
memory: typical of small CMOS push-pull outputs), read by a 100 kΩ input.
"""

from __future__ import annotations

from .design import Design

DEMO_BASE = Design(
    topology="r2r-voltage", output="unbuffered", bits=8, vref=3.3, unit_r=10e3,
    ron_high=40.0, ron_low=25.0, ref_r=0.0, load_r=100e3, name="R-2R ladder",
)
"""The demo's first candidate."""


def demo_candidates() -> list[Design]:
    """The demo's candidates: the R-2R ladder and a terminated binary-weighted divider."""
    return [
        DEMO_BASE,
        DEMO_BASE.replace(topology="binary-weighted", output="terminated-divider",
                          name="Binary-weighted"),
    ]
