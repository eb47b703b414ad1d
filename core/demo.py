"""The built-in demo: an invented scenario used when the program starts without a file.

A sensor front end takes its bias from an 8-bit setpoint: an R-2R ladder driven straight from a
3.3 V microcontroller port (pins of about 40 Ω driving high and 25 Ω driving low — from memory:
typical of small CMOS push-pull outputs), read by the 100 kΩ input of the bias stage, with a
10 nF filter capacitor at that input. The first build (revision A) used the 1 % thick-film
resistors on the shelf (±100 ppm/K); about a third of its boards missed ½ LSB of DNL at final
test (the bundled example measurement is one such board). The question for revision B:

- keep the ladder and pay for 0.1 % thin-film resistors (±25 ppm/K), or
- keep the 1 % parts and segment the top four bits into fifteen equal legs (more parts).

The review answers it: both meet the targets with a 99 % yield; the ladder with 0.1 % parts does
so with fewer parts (24 against 42), so it is recommended; revision A stays in the comparison
to show what failed.
"""

from __future__ import annotations

from .design import Design

_PORT_LADDER = dict(bits=8, vref=3.3, unit_r=10e3, ron_high=40.0, ron_low=25.0, ref_r=0.0,
                    load_r=100e3, load_c=10e-9)
"""What every candidate shares: the port, the reference, the bias stage's input."""

DEMO_BASE = Design(
    topology="r2r-voltage", output="unbuffered", name="Ladder, 1 % parts (rev A)",
    mismatch={"tolerance": 0.01, "tempco": 100e-6}, **_PORT_LADDER,
)
"""The demo's first candidate: revision A as designed (the example measurement's board)."""


def demo_candidates() -> list[Design]:
    """The demo's candidates: revision A, the ladder with 0.1 % parts, the segmented 1 % network."""
    return [
        DEMO_BASE,
        DEMO_BASE.replace(name="Ladder, 0.1 % parts",
                          mismatch={"tolerance": 0.001, "tempco": 25e-6}),
        DEMO_BASE.replace(topology="segmented", output="unbuffered", thermometer_bits=4,
                          name="Segmented 4 + 4, 1 % parts"),
    ]
