"""Invented measurements of as-built designs, for tests and the shipped example file.

A built board is a :class:`Design` whose ``parts`` hold every resistor's as-built value; its exact
output at each code plus seeded Gaussian meter noise (and an optional meter offset and gain) gives
the readings. Everything is seeded, so the same call always writes the same file.
"""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path

import numpy as np

from ..design import Design
from ..solve import solve
from ..topologies import build
from .reading import Measurement, parse_text, read_measurement


def random_as_built(design: Design, sigma: float, seed: int,
                    off: Mapping[str, float] | None = None) -> Design:
    """``design`` with every resistor drawn around its value (Gaussian, relative σ) and some set off.

    Parameters
    ----------
    design : Design
    sigma : float — relative standard deviation of every part (fraction)
    seed : int
    off : mapping part id → deviation (fraction), optional — parts forced to nominal·(1 + deviation)
    """
    rng = np.random.default_rng(seed)
    net = build(design)
    parts = {p.part_id: float(p.ohms * (1.0 + sigma * rng.standard_normal())) for p in net.parts}
    for pid, dev in (off or {}).items():
        nominal = next(p.ohms for p in net.parts if p.part_id == pid)
        parts[pid] = float(nominal * (1.0 + dev))
    return design.replace(parts=parts, name=f"{design.label} (as built)")


def synthesize(built: Design, noise: float, seed: int, repeats: Mapping[int, int] | None = None,
               missing: list[int] | None = None, meter_offset: float = 0.0,
               meter_gain: float = 0.0, source: str = "synthetic") -> Measurement:
    """Readings of ``built`` at every code except ``missing``, with meter noise.

    Parameters
    ----------
    built : Design — the as-built board
    noise : float — meter noise σ per reading, volts
    seed : int
    repeats : mapping code → number of readings (default one)
    missing : list of codes not measured
    meter_offset, meter_gain : float — volts and fraction the meter adds
    """
    n_codes = 2**built.bits
    codes = np.setdiff1d(np.arange(n_codes), np.asarray(missing or [], dtype=np.int64))
    count = np.ones(codes.size, dtype=np.int64)
    for code, k in (repeats or {}).items():
        count[np.searchsorted(codes, code)] = k
    raw = np.repeat(codes, count)
    true = solve(build(built), codes=raw).vout
    rng = np.random.default_rng(seed)
    volts = meter_offset + (1.0 + meter_gain) * true + noise * rng.standard_normal(raw.size)
    return Measurement.from_readings(raw, volts, source=source)


def format_readings(m: Measurement, header: str = "", unit: str = "mV") -> str:
    """CSV text ``code,output_<unit>`` of the raw readings (comment lines from ``header``)."""
    scale = {"V": 1.0, "mV": 1e3, "uV": 1e6}[unit]
    lines = [f"# {h}".rstrip() for h in header.splitlines()]
    lines.append(f"code,output_{unit}")
    lines += [f"{int(c)},{v * scale:.4f}" for c, v in zip(m.raw_codes, m.raw_volts, strict=True)]
    return "\n".join(lines) + "\n"


EXAMPLE_NOTE = """\
Invented example: an 8-bit R-2R ladder setting the bias of a sensor front end.
The design is Rungwise's demo ladder (3.3 V, 10 kOhm, port pins 40/25 Ohm, 100 kOhm load).
Built with 0.05 % (sigma) resistors, except leg5, fitted 1.8 % high.
Bench meter noise 60 uV rms; codes 0, 64, 128 and 255 read several times;
codes 17, 18 and 200 were skipped. Outputs in millivolts."""
"""Comment lines at the top of the shipped example measurement."""


def sensor_bias_example() -> str:
    """Text of ``assets/example-measurement-sensor-bias.csv`` (seeded, so always the same)."""
    from ..demo import DEMO_BASE

    built = random_as_built(DEMO_BASE, 0.0005, seed=3, off={"leg5": 0.018})
    m = synthesize(built, noise=60e-6, seed=4, repeats={0: 5, 64: 3, 128: 5, 255: 5},
                   missing=[17, 18, 200])
    return format_readings(m, EXAMPLE_NOTE, unit="mV")


EXAMPLE_FILE_NAME = "example-measurement-sensor-bias.csv"
"""The shipped example measurement's file name (in ``assets/``)."""

EXAMPLE_BOARD_NOTE = ("the example board: the demo's revision A ladder with one resistor (leg5) "
                      "fitted 1.8 % high")
"""What the example measurement is of, in words for a screen."""


def example_measurement() -> Measurement:
    """The bundled example measurement: the file in ``assets/`` when this is a source checkout,
    else the same text made by :func:`sensor_bias_example` (a test keeps the two identical)."""
    shipped = Path(__file__).resolve().parents[2] / "assets" / EXAMPLE_FILE_NAME
    if shipped.is_file():
        return read_measurement(shipped)
    return parse_text(sensor_bias_example(), source=EXAMPLE_FILE_NAME)
