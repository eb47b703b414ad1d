"""Bit weights, suspects and as-built designs recovered from synthetic measurements of built boards."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from rungwise.core import Design, evaluate
from rungwise.core.diagnose import (
    MeasurementError,
    as_built,
    diagnose,
    fit_bit_weights,
    trial_curves,
)
from rungwise.core.diagnose.synthetic import random_as_built, synthesize
from rungwise.core.solve import solve
from rungwise.core.topologies import build

LINEAR_R2R = Design(topology="r2r-voltage", bits=8, vref=3.3, unit_r=10e3, ron_high=30.0,
                    ron_low=30.0, load_r=100e3)
"""Equal switch resistances: superposition holds exactly, so V(k) = V0 + Σ b_i·w_i."""


def _true_weights(design: Design) -> np.ndarray:
    v = solve(build(design), codes=np.array([0, *(1 << np.arange(design.bits))])).vout
    return v[1:] - v[0]


def test_bit_weights_of_a_hand_made_curve():
    # weights 1, 2, 4.5 V (by hand): L = 7.5/7 V; errors (w_i − 2^i·L)/L = w_i·7/7.5 − 2^i
    codes = np.arange(8)
    b = (codes[:, None] >> np.arange(3)) & 1
    v = 0.25 + b @ np.array([1.0, 2.0, 4.5])
    fit = fit_bit_weights(codes, v, 3)
    np.testing.assert_allclose(fit.weights, [1.0, 2.0, 4.5], atol=1e-12)
    np.testing.assert_allclose(fit.weight_error_lsb, [7 / 7.5 - 1, 14 / 7.5 - 2, 31.5 / 7.5 - 4],
                               atol=1e-12)
    assert fit.offset == pytest.approx(0.25)
    assert fit.residual_rms_lsb == pytest.approx(0.0, abs=1e-12)
    assert np.sum(fit.weight_error_lsb) == pytest.approx(0.0, abs=1e-12)


def test_bit_weights_recovered_within_the_noise():
    built = random_as_built(LINEAR_R2R, 0.003, seed=11)
    sigma = 100e-6
    m = synthesize(built, noise=sigma, seed=12, missing=[5, 77, 128, 129, 254])
    fit = fit_bit_weights(m.codes, m.volts, 8)
    true = _true_weights(built)
    # least-squares standard errors: about 2σ/√n per weight here
    assert np.all(fit.stderr < 2.5 * sigma / np.sqrt(m.codes.size))
    assert np.all(np.abs(fit.weights - true) < 4.0 * fit.stderr)
    # the residual is the meter noise only
    assert fit.residual_rms_lsb * abs(fit.fitted_lsb) == pytest.approx(sigma, rel=0.15)


def test_bit_weights_with_an_untouched_bit_are_not_identifiable():
    codes = np.arange(0, 128, 3)  # bit 7 never set
    v = codes * 0.01
    fit = fit_bit_weights(codes, v, 8)
    assert not fit.identifiable[7]
    assert np.isnan(fit.weights[7])
    np.testing.assert_allclose(fit.weights[:7], 0.01 * 2.0 ** np.arange(7), atol=1e-12)
    assert np.all(np.isnan(fit.weight_error_lsb))


def test_switch_resistance_shows_as_not_linear_in_the_bits():
    d = LINEAR_R2R.replace(ron_high=200.0, ron_low=0.0)
    v = evaluate(d).vout
    linear = fit_bit_weights(np.arange(256), evaluate(LINEAR_R2R).vout, 8)
    switched = fit_bit_weights(np.arange(256), v, 8)
    assert linear.residual_rms_lsb < 1e-9
    assert switched.residual_rms_lsb > 1e-3


@pytest.mark.parametrize("design", [
    LINEAR_R2R,
    Design(topology="binary-weighted", output="summing-amp", bits=5, vref=5.0, unit_r=10e3,
           ron_high=15.0, ron_low=5.0),
    Design(topology="r2r-current", bits=5, vref=2.5, unit_r=4.7e3, ref_r=20.0),
])
def test_batched_trials_equal_separate_solves(design):
    # one batched solve with per-part arrays against one design per trial through design.parts
    net = build(design)
    ids = [*[p.part_id for p in net.parts][:6], net.parts[-1].part_id]
    factors = np.linspace(0.97, 1.05, len(ids))
    codes = np.arange(0, 2**design.bits, 3)
    batched = trial_curves(design, ids, factors, codes)
    nominal = {p.part_id: p.ohms for p in net.parts}
    for row, pid, f in zip(batched, ids, factors, strict=True):
        one = design.replace(parts={pid: nominal[pid] * f})
        np.testing.assert_allclose(row, evaluate(one).vout[codes], rtol=1e-11, atol=1e-14)


CASES = [
    (Design(topology="r2r-voltage", bits=8, vref=3.3, unit_r=10e3, ron_high=40, ron_low=25,
            load_r=100e3), "leg5", 0.018),
    (Design(topology="r2r-voltage", bits=10, vref=2.5, unit_r=4.7e3, output="buffer", gain=2),
     "leg8", 0.010),
    (Design(topology="binary-weighted", output="divider", bits=6, vref=5, unit_r=10e3,
            ron_high=20, ron_low=20), "bit4", 0.020),
    (Design(topology="binary-weighted", output="terminated-divider", bits=6, vref=5,
            unit_r=10e3), "bit3", -0.030),
    (Design(topology="binary-weighted", output="summing-amp", bits=6, vref=5, unit_r=10e3),
     "bit5", 0.015),
    (Design(topology="r2r-current", bits=8, vref=5, unit_r=10e3), "leg4", -0.015),
    (Design(topology="segmented", bits=8, vref=3.3, unit_r=10e3), "seg5", 0.020),
    (Design(topology="string", output="buffer", bits=6, vref=3.3, unit_r=1e3), "string21",
     -0.025),
]


@pytest.mark.parametrize(("design", "part", "deviation"), CASES,
                         ids=[f"{c[0].topology}-{c[1]}" for c in CASES])
def test_the_right_part_and_deviation_are_named(design, part, deviation):
    built = random_as_built(design, 0.0002, seed=5, off={part: deviation})
    m = synthesize(built, noise=20e-6, seed=6, repeats={0: 4, 2**design.bits - 1: 4},
                   missing=[3, 2 ** (design.bits - 1) + 1], meter_offset=1e-3, meter_gain=0.002)
    result = diagnose(m, design)
    best = result.suspects.suspects[0]
    assert best.id == part
    assert best.deviation == pytest.approx(deviation, abs=1e-3)
    runner_up = result.suspects.suspects[1]
    assert runner_up.residual_rms_lsb > 3 * best.residual_rms_lsb
    assert result.suspects.equivalent == []
    # the meter's offset and gain are taken out, not blamed on a part
    assert result.suspects.offset == pytest.approx(1e-3, abs=0.1 * abs(result.measured.lsb))
    assert result.suspects.gain == pytest.approx(0.002, abs=2e-3)


def test_msb_leg_and_last_series_resistor_cannot_be_told_apart():
    design = LINEAR_R2R
    built = random_as_built(design, 0.0, seed=1, off={"series6": -0.012})
    m = synthesize(built, noise=20e-6, seed=2)
    fit = diagnose(m, design).suspects
    named = [fit.suspects[0].id, *fit.equivalent]
    assert set(named) == {"series6", "leg7"}
    series6 = next(s for s in fit.suspects if s.id == "series6")
    assert series6.deviation == pytest.approx(-0.012, abs=2e-4)


@pytest.mark.parametrize(("design", "part"), [
    (CASES[3][0], "term"), (CASES[4][0], "feedback"),
])
def test_a_part_that_only_sets_the_gain_is_listed_last_without_a_value(design, part):
    built = random_as_built(design, 0.0, seed=1, off={part: 0.02})
    m = synthesize(built, noise=0.0, seed=2)
    fit = diagnose(m, design).suspects
    last = fit.suspects[-1]
    assert last.id == part
    assert not last.identifiable
    assert np.isnan(last.deviation)
    with pytest.raises(MeasurementError, match="only a gain"):
        as_built(design, last)
    # trusting the measured gain (calibrated reference and meter) finds it
    absolute = diagnose(m, design, absolute=True).suspects.suspects[0]
    assert absolute.id == part
    assert absolute.deviation == pytest.approx(0.02, abs=1e-9)


def test_as_built_design_repredicts_the_measured_curve():
    design = CASES[0][0]
    built = random_as_built(design, 0.0, seed=1, off={"leg5": 0.018})
    m = synthesize(built, noise=30e-6, seed=2, missing=[10, 11])
    result = diagnose(m, design, absolute=True)
    assert result.as_built is not None
    assert result.as_built.parts["leg5"] == pytest.approx(20e3 * 1.018, rel=2e-4)
    err = (result.as_built_volts - m.volts) / abs(result.measured.lsb)
    assert np.sqrt(np.mean(err**2)) < 0.01  # noise alone is 30 µV = 0.0026 LSB
    # the prediction of the as-built design is what evaluate() gives for it
    np.testing.assert_allclose(result.as_built_volts, evaluate(result.as_built).vout[m.codes],
                               rtol=1e-12)


def test_codes_beyond_the_design_are_refused():
    m = synthesize(Design(bits=4), noise=0.0, seed=0)
    with pytest.raises(MeasurementError, match="beyond the 3-bit design"):
        diagnose(m, Design(bits=3))
    from rungwise.core.diagnose import parse_text

    wide = parse_text("0b00000,0\n0b00011,3\n0b00111,7\n")
    with pytest.raises(MeasurementError, match="5 binary digits but the design has 3 bits"):
        diagnose(wide, Design(bits=3))


def test_sparse_codes_and_trial_chunks_give_the_same_curves(monkeypatch):
    from rungwise.core.diagnose import suspects

    design = CASES[0][0]
    ids = ["leg5", "series2", "term", "leg0"]
    factors = np.array([1.02, 0.99, 1.01, 0.97])
    every = trial_curves(design, ids, factors, np.arange(256))
    sparse = np.array([0, 9, 100, 255])  # few codes: only those are solved
    np.testing.assert_allclose(trial_curves(design, ids, factors, sparse), every[:, sparse],
                               rtol=1e-12)
    monkeypatch.setattr(suspects, "TRIAL_CODE_ELEMENTS", 512)  # two trials per solve
    np.testing.assert_allclose(trial_curves(design, ids, factors, np.arange(256)), every,
                               rtol=1e-12)


def test_a_set_cancel_event_stops_the_fit():
    import threading

    from rungwise.core.diagnose import DiagnosisCancelled

    m = synthesize(LINEAR_R2R, noise=0.0, seed=0)
    stop = threading.Event()
    stop.set()
    with pytest.raises(DiagnosisCancelled):
        diagnose(m, LINEAR_R2R, cancel=stop)


@settings(max_examples=60, deadline=None)
@given(st.dictionaries(st.integers(0, 15), st.floats(-5, 5, allow_nan=False), min_size=1,
                       max_size=16),
       st.sampled_from(["r2r-voltage", "binary-weighted", "r2r-current"]),
       st.booleans())
def test_any_measured_curve_is_diagnosed_or_refused_clearly(readings, topology, absolute):
    from rungwise.core.diagnose import Measurement

    m = Measurement.from_readings(list(readings), list(readings.values()))
    design = Design(topology=topology, bits=4, vref=2.0, unit_r=1e3, ron_high=20.0, ron_low=5.0)
    try:
        result = diagnose(m, design, absolute=absolute)
    except MeasurementError:
        return
    out = result.to_dict()
    assert len(out["inl_endpoint"]) == m.codes.size
    assert out["suspects"]
    assert result.correction.max_abs_inl <= result.correction.bound_lsb + 1e-9


def test_too_many_parts_gives_a_note_instead_of_suspects(monkeypatch):
    from rungwise.core.diagnose import suspects

    monkeypatch.setattr(suspects, "MAX_SUSPECT_PARTS", 4)
    m = synthesize(LINEAR_R2R, noise=0.0, seed=0)
    result = diagnose(m, LINEAR_R2R)
    assert result.suspects.suspects == []
    assert "too many to fit" in result.suspects.note
    assert result.as_built is None
    out = result.to_dict()
    assert out["suspects"] == []
    assert out["unexplained_rms_lsb"] is None
