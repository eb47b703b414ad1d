"""The shipped example measurement: regenerated exactly by its documented generator, and diagnosed."""

from __future__ import annotations

from pathlib import Path

import pytest

from rungwise.core.demo import DEMO_BASE
from rungwise.core.diagnose import diagnose, read_measurement
from rungwise.core.diagnose.synthetic import sensor_bias_example

EXAMPLE = Path(__file__).resolve().parents[2] / "assets" / "example-measurement-sensor-bias.csv"


def test_example_file_is_what_the_generator_writes():
    assert EXAMPLE.read_text(encoding="utf-8") == sensor_bias_example()


def test_example_names_leg5_about_1_8_percent_high():
    m = read_measurement(EXAMPLE)
    assert m.n_readings == 253 + 4 + 2 + 4 + 4
    result = diagnose(m, DEMO_BASE)
    best = result.suspects.suspects[0]
    assert best.id == "leg5"
    assert best.deviation == pytest.approx(0.018, abs=1.5e-3)  # other parts are 0.05 % off
    assert result.measured.monotonic
    assert result.correction.max_abs_inl <= result.correction.bound_lsb
