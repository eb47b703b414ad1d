"""The timing and sine tables, the transition figures' layout and the exact solver's own checks."""

from __future__ import annotations

import math

import numpy as np
import pytest

from rungwise.core.design import Design
from rungwise.core.designfile import DesignFile, dumps, loads
from rungwise.core.errors import DesignError
from rungwise.core.evaluate import evaluate
from rungwise.core.metrics.glitch import sample_codes, solve_transitions, waveforms
from rungwise.core.metrics.spectrum import sine_codes
from rungwise.core.solve import solve
from rungwise.core.timing import timing_of
from rungwise.core.topologies import build

TIMING = {"rise": 3e-9, "fall": 1e-9, "skew": [0, 2e-9, 0, 1e-9], "node_c": 2e-12}


@pytest.mark.parametrize(("settings", "key", "words"), [
    ({"timing.rise": "-1n"}, "timing.rise", "0 (ideal) or ≥ 1e-15 s and ≤ 1 s"),
    ({"timing.node_c": "2"}, "timing.node_c", "0 (none) or ≥ 1e-18 F and ≤ 1 F"),
    ({"timing.fall": "1e-20"}, "timing.fall", "0 (ideal) or ≥ 1e-15 s and ≤ 1 s"),
    ({"timing.skew": "1n, 2"}, "timing.skew", "0 (none) or ≥ 1e-15 s and ≤ 1 s"),
    ({"timing.width": "1n"}, "timing.width", "known keys: rise, fall, skew, node_c"),
    ({"sine.cycles": "64"}, "sine.cycles", "coprime"),
    ({"sine.cycles": "2049"}, "sine.cycles", "below half of sine.samples"),
    ({"sine.samples": "8"}, "sine.samples", "from 16 to"),
    ({"sine.amplitude": "1.5"}, "sine.amplitude", "(150 %) is out of range; allowed: a fraction"),
])
def test_refusals_name_the_key_and_range(settings, key, words):
    with pytest.raises(DesignError) as err:
        Design().with_settings(settings)
    assert err.value.field == key
    assert words in str(err.value)


def test_skew_reads_as_list_or_text_and_survives_a_file():
    a = Design(bits=4).with_settings({"timing.skew": "1n, 0, 2.5n", "timing.rise": "4n"})
    assert a.timing["skew"] == (1e-9, 0.0, 2.5e-9)
    assert timing_of(a).skew == (1e-9, 0.0, 2.5e-9, 0.0)  # missing bits 0
    back = loads(dumps(DesignFile(candidates=[a.replace(sine={"cycles": 65})]))).candidates[0]
    assert back.timing == a.timing
    assert back.sine == {"cycles": 65}


def test_no_capacitance_and_instant_edges_say_so():
    ev = evaluate(Design(bits=6))
    assert "no capacitance" in ev.dynamics.note
    for key in ("glitch_major", "glitch_peak_major", "settling_major", "glitch_worst",
                "settling_worst", "settling_full_scale"):
        assert math.isnan(ev.summary[key]), key
        assert ev.no_meaning[key]
    assert ev.dynamics.glitch[0] == 0.0
    assert np.all(np.isnan(ev.dynamics.glitch[1:]))
    assert np.isfinite(ev.summary["sinad_db"])  # the spectrum needs no timing


def test_capacitance_without_edges_settles_but_has_no_glitch_figure():
    ev = evaluate(Design(bits=6, load_c=10e-12))
    assert ev.dynamics.note is None
    assert "no switch edge timing" in ev.dynamics.glitch_note
    assert ev.summary["settling_major"] > 0
    assert "settling_major" not in ev.no_meaning
    for key in ("glitch_major", "glitch_peak_major", "glitch_worst"):
        assert math.isnan(ev.summary[key]), key  # never 0 as if it were a result
        assert "no switch edge timing" in ev.no_meaning[key]
    assert np.all(np.isnan(ev.dynamics.glitch[1:]))
    assert np.all(ev.dynamics.settling[1:] > 0)


@pytest.mark.parametrize("timing", [
    {"node_c": 1e-15, "rise": 1e-9, "fall": 3e-9},
    {"node_c": 1e-15, "rise": 3e-9, "fall": 1e-9},
    {"node_c": 1e-15},
], ids=["make-first", "break-first", "no-edges"])
def test_long_strings_with_node_capacitance_are_solved(timing):
    """Above the dense solver's 64 nodes a string with node capacitance goes to the Laplace
    domain whatever its switch timing."""
    d = Design(topology="string", bits=8, ron_high=100, load_c=1e-12, load_r=1e8, timing=timing)
    ev = evaluate(d)
    assert ev.dynamics.note is None
    assert np.all(np.isfinite(ev.dynamics.settling))
    assert ev.summary["settling_major"] > 0
    assert ("rise" in timing) == (ev.dynamics.glitch_note is None)


def test_per_code_layout_and_summary():
    d = Design(bits=5, ron_high=40, ron_low=70, load_c=5e-12, timing=TIMING)
    ev = evaluate(d)
    g, s = ev.per_code()["glitch"], ev.per_code()["settling"]
    assert g.shape == s.shape == (32,)
    assert g[0] == s[0] == 0.0
    assert ev.summary["glitch_major"] == g[16]  # transition 15 → 16
    c = int(np.argmax(np.abs(g)))
    assert ev.summary["glitch_worst_code"] == c
    assert ev.summary["glitch_worst"] == g[c]
    assert ev.summary["settling_worst"] == np.max(s)
    one = solve_transitions(build(d), timing_of(d), np.array([20]), np.array([21]))
    assert one.impulse[0] == pytest.approx(g[21], rel=1e-12)  # alone or in a batch: the same
    assert one.settling[0] == pytest.approx(s[21], rel=1e-12)


def test_above_twelve_bits_a_stated_sample():
    codes = sample_codes(14)
    assert codes.size == 4095
    assert codes[0] == 4
    assert 2**13 in codes
    assert np.array_equal(sample_codes(12), np.arange(1, 4096))


@pytest.mark.parametrize("topology", ["r2r-voltage", "binary-weighted", "r2r-current",
                                      "segmented"])
def test_peak_and_settling_match_a_dense_look_at_the_exact_waveform(topology):
    """The grid + refinement finds what 400,001 evenly spaced samples of the waveform show."""
    d = Design(topology=topology, bits=5, ron_high=40, ron_low=70, load_c=5e-12, timing=TIMING,
               thermometer_bits=2)
    net, tm = build(d), timing_of(d)
    for c in (16, 11):
        f = solve_transitions(net, tm, np.array([c - 1]), np.array([c]))
        t = np.linspace(0, 1e-6, 400_001)
        y, ys = waveforms(net, tm, c - 1, c, t)
        assert f.peak[0] == pytest.approx(np.max(np.abs(y - ys)), rel=1e-4)
        outside = np.nonzero(np.abs(y - y[-1]) > abs(f.lsb) / 2)[0]
        assert f.settling[0] == pytest.approx(t[outside[-1]], abs=2 * (t[1] - t[0]))
        # the sampled trapezoid errs by up to |jump|·dt/2 at each jump (a current-steering output
        # jumps when a leg changes over; ≤ 2 legs per bit here)
        dt = t[1] - t[0]
        assert f.impulse[0] == pytest.approx(np.trapezoid(y - ys, t), rel=1e-4,
                                             abs=2 * d.bits * np.max(np.abs(y - ys)) * dt / 2)


def test_break_before_make_holds_the_floating_node():
    """A string whose tap switch opens (fall) before the next closes (rise): the output node
    floats and holds its charge meanwhile (no NaN, no decay)."""
    d = Design(topology="string", bits=4, ron_high=100, load_c=1e-12,
               timing={"rise": 6e-9, "fall": 1e-9})
    net, tm = build(d), timing_of(d)
    t = np.array([0.0, 0.6e-9, 1.0e-9, 2.0e-9, 2.9e-9])
    y, _ = waveforms(net, tm, 7, 8, t)
    assert np.all(np.isfinite(y))
    assert y[2] == pytest.approx(y[4], rel=1e-12)


def test_sine_codes_follow_the_formula():
    c = sine_codes(4, 16, 3, 1.0)  # c_mid = 7.5; halves round upwards
    n = np.arange(16)
    assert np.array_equal(c, np.floor(7.5 + 7.5 * np.sin(2 * np.pi * 3 * n / 16) + 0.5))
    assert c.min() == 0
    assert c.max() == 15


def test_figure_meaning_names_the_reason_for_glitch_rows():
    from rungwise.core.figure_meaning import not_meaningful

    plain = Design(bits=6)
    assert "no switch edge timing" in not_meaningful(plain, "glitch_major")
    assert "no capacitance" in not_meaningful(plain, "settling_worst_code")
    assert not_meaningful(plain.replace(timing={"skew": [0, 1e-9]}), "glitch_major") is None
    assert not_meaningful(plain.replace(load_c=1e-12), "settling_major") is None
    assert not_meaningful(Design(topology="string", bits=7, load_c=1e-12,
                                 timing={"node_c": 1e-15, "rise": 1e-9, "fall": 2e-9}),
                          "settling_major") is None
    assert not_meaningful(Design(topology="string", bits=7, load_c=1e-12,
                                 timing={"node_c": 1e-15}), "settling_major") is None
    assert not_meaningful(Design(topology="string", bits=7, load_c=1e-12), "settling_major") is None
    assert not_meaningful(plain, "sinad_db") is None


def test_segmented_sweep_major_carry_glitch_falls_with_m():
    """At the major carry one segment (2^L LSB, L = N − M) rises while the L binary bits
    (2^L − 1 LSB) fall, so the impulse is −LSB·(2^L·rise − (2^L − 1)·fall)/2 (first-moment
    identity, from memory): it halves with every thermometer bit added."""
    from rungwise.core.sweep import sweep

    d = Design(topology="segmented", bits=10, load_c=10e-12,
               timing={"rise": 4e-9, "fall": 1e-9, "node_c": 1e-12})
    m, g = sweep([d], "thermometer_bits", list(range(1, 11))).series(0, "glitch_major")
    lsb = d.vref / 2**10
    span = 2.0 ** (10 - m)
    np.testing.assert_allclose(g, -lsb * (span * 4e-9 - (span - 1) * 1e-9) / 2, rtol=1e-9)
    assert np.all(np.diff(np.abs(g)) < 0)


from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

_times = st.one_of(st.just(0.0), st.floats(1e-15, 20e-9))


@settings(max_examples=25, deadline=None, derandomize=True)
@given(topology=st.sampled_from(["r2r-voltage", "r2r-current", "binary-weighted", "segmented"]),
       bits=st.integers(1, 5), ron=st.one_of(st.just(0.0), st.floats(1e-3, 500.0)),
       rise=_times, fall=_times,
       skew=st.lists(_times, max_size=5), node_c=st.one_of(st.just(0.0), st.floats(1e-18, 5e-12)),
       load_c=st.one_of(st.just(0.0), st.floats(1e-15, 50e-12)))  # 0 or ≥ 1 fF (FIELDS)
def test_first_moment_identity_for_random_timing(topology, bits, ron, rise, fall, skew, node_c,
                                                 load_c):
    """Equal on-resistances, any edges and capacitances: every transition's net impulse is
    −Σ ΔV_leg·(start + edge/2) (first-moment identity, from memory); settling and peak finite."""
    d = Design(topology=topology, bits=bits, ron_high=ron, ron_low=ron, load_c=load_c,
               thermometer_bits=min(2, bits),
               timing={"rise": rise, "fall": fall, "skew": skew, "node_c": node_c})
    net, tm = build(d), timing_of(d)
    codes = np.arange(1, 2**bits)
    f = solve_transitions(net, tm, codes - 1, codes)
    if f.reason is not None:
        assert not tm.has_edges
        assert node_c == 0
        return
    from rungwise.core.metrics.switching import branches, leg_skews
    from rungwise.core.metrics.transient import dc_state

    br = branches(net, tm.node_c, tm.load_c)
    start = leg_skews(br, tm.skew)
    drive = np.asarray(br.decode(np.arange(net.n_codes)), bool)
    expected = np.zeros(codes.size)
    for j, c in enumerate(codes):
        for leg in np.nonzero(drive[c] != drive[c - 1])[0]:
            alone = drive[c - 1].copy()
            alone[leg] = drive[c, leg]
            _, y = dc_state(br, np.array([alone, drive[c - 1]]))
            expected[j] -= (y[0] - y[1]) * (start[leg] + (rise if drive[c, leg] else fall) / 2)
    scale = np.max(np.abs(np.diff(solve(net).vout))) * 40e-9
    np.testing.assert_allclose(f.impulse, expected, rtol=1e-7, atol=1e-9 * scale)
    assert np.all(np.isfinite(f.settling))
    assert np.all(f.settling >= 0)
    assert np.all(f.peak >= 0)


@pytest.mark.parametrize("design", [
    Design(topology="string", bits=5, ron_high=200, load_c=5e-12, ref_r=20,
           timing={"rise": 3e-9, "fall": 1e-9, "skew": [0, 1e-9]}),
    Design(topology="string", output="buffer", gain=2, bits=4, ron_high=200, load_c=5e-12,
           load_r=1e5, timing={"rise": 1e-9, "fall": 3e-9}),
], ids=["unbuffered", "buffered"])
def test_string_template_matches_the_whole_string(design):
    """With no node capacitance a string's change from tap a to tap b sees only three resistors
    (below a, between, above b): the three-node template gives the whole network's figures."""
    net, tm = build(design), timing_of(design)
    codes = np.arange(1, 2**design.bits)
    fc, tc = np.append(codes - 1, 0), np.append(codes, 2**design.bits - 1)  # and full scale
    fast = solve_transitions(net, tm, fc, tc)
    whole = solve_transitions(net, tm, fc, tc, method="dense")
    for key in ("impulse", "peak", "settling"):  # tap 0's 1 mΩ stand-in for ground: 1e-7
        np.testing.assert_allclose(getattr(fast, key), getattr(whole, key), rtol=1e-6,
                                   atol=1e-6 * np.max(np.abs(getattr(whole, key))), err_msg=key)
    t = np.linspace(0, 200e-9, 50)
    np.testing.assert_allclose(waveforms(net, tm, 7, 8, t)[0],
                               waveforms(net, tm, 7, 8, t, method="dense")[0], rtol=1e-7)


def test_long_strings_without_node_capacitance_are_solved():
    d = Design(topology="string", bits=12, ron_high=200, load_c=5e-12,
               timing={"rise": 3e-9, "fall": 1e-9})
    ev = evaluate(d)
    assert ev.dynamics.note is None
    assert np.all(np.isfinite(ev.dynamics.glitch))
    assert np.all(ev.dynamics.settling[1:] > 0)
