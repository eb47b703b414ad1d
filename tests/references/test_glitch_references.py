"""Glitch, settling and the test sine's spectrum against outside sources.

- ngspice transient (its own integration of the same circuit; ``spice_transient.py``);
- the first-moment identity of linear networks: a step delayed by d through any stable linear
  network changes the integral of the output by −amplitude × d (a property of the Laplace
  transform: ∫ y = Y(0)·…, from memory; e.g. any signals-and-systems text);
- ideal N-bit quantisation SINAD = 6.02·N + 1.76 dB (common practice; textbook quantisation
  noise of a full-scale sine);
- an independent two-sided numpy FFT of the same codes;
- IEEE Std 1241 / IEEE Std 1658 for the definitions (stated in ``glitch.py``/``spectrum.py``).
"""

from __future__ import annotations

import numpy as np
import pytest

from references.spice_transient import transient
from rungwise.core.design import Design
from rungwise.core.metrics.glitch import solve_transitions
from rungwise.core.metrics.spectrum import harmonic_bins, sine_codes, spectrum_figures
from rungwise.core.metrics.switching import branches, leg_skews
from rungwise.core.metrics.transient import dc_state, respond
from rungwise.core.solve import solve
from rungwise.core.timing import timing_of
from rungwise.core.topologies import build

TIMING = {"rise": 5e-9, "fall": 2e-9, "skew": [0, 1e-9, 0, 2e-9, 0.5e-9, 3e-9], "node_c": 1e-12}

SPICE_DESIGNS = [
    Design(topology="r2r-voltage", bits=6, ron_high=50, ron_low=80, load_c=10e-12, timing=TIMING),
    Design(topology="binary-weighted", output="divider", bits=6, unit_r=5e3, ron_high=40,
           ron_low=90, load_c=5e-12, timing=TIMING),
    Design(topology="segmented", bits=6, thermometer_bits=2, ron_high=60, ron_low=60,
           load_c=10e-12, timing=TIMING),
    Design(topology="r2r-current", bits=6, ron_high=50, ron_low=80, timing=TIMING),
]

T_STOP = 1.5e-6
T_MAX = 5e-11
"""ngspice's largest time step, s: the tolerances below follow from it. (At 200 ps the area of a
current-steering output, whose jumps ngspice's trapezoidal rule spreads over a step, was 0.3 %
off; at 50 ps every case here agrees to better than 1e-5.)"""


def _area(t: np.ndarray, y: np.ndarray) -> float:
    return float(np.trapezoid(y - y[-1], t))


def _settling(t: np.ndarray, y: np.ndarray, half_lsb: float) -> float:
    out = np.nonzero(np.abs(y - y[-1]) > half_lsb)[0]
    if not out.size:
        return 0.0
    i = out[-1]  # the crossing lies between points i and i + 1; take it by linear interpolation
    e0, e1 = abs(y[i] - y[-1]) - half_lsb, abs(y[i + 1] - y[-1]) - half_lsb
    return float(t[i] + (t[i + 1] - t[i]) * e0 / (e0 - e1))


@pytest.mark.ngspice
@pytest.mark.parametrize("design", SPICE_DESIGNS, ids=lambda d: d.topology)
def test_glitch_agrees_with_ngspice(design):
    net = build(design)
    tm = timing_of(design)
    br = branches(net, tm.node_c, tm.load_c)
    start = leg_skews(br, tm.skew)
    for c in (32, 21, 1):
        mine = solve_transitions(net, tm, np.array([c - 1]), np.array([c]))
        half = abs(mine.lsb) / 2
        t, y = transient(net, c - 1, c, start, tm.rise, tm.fall, tm.node_c, tm.load_c, T_STOP,
                         T_MAX)
        ts, ys = transient(net, c - 1, c, np.zeros_like(start), 0.0, 0.0, tm.node_c, tm.load_c,
                           T_STOP, T_MAX)
        # ngspice (trapezoidal rule, step ≤ T_MAX): 1e-3 of the area; the synchronous run's
        # 1 ps edges move its area by at most Σ|ΔV_k|·0.5 ps ≤ |Vref|·1 ps (first-moment identity)
        dv = abs(y[-1] - y[0])
        area = _area(t, y) - _area(ts, ys)
        assert mine.impulse[0] == pytest.approx(area, rel=1e-3, abs=abs(design.vref) * 1e-12), c
        # the peak from ngspice's points, the synchronous run interpolated linearly onto them:
        # off by at most the largest change of either waveform within one ngspice step
        diff = np.abs(y - np.interp(t, ts, ys))
        step = max(np.max(np.abs(np.diff(y))), np.max(np.abs(np.diff(ys))))
        assert abs(mine.peak[0] - np.max(diff)) <= step + 1e-6 * dv, c
        # settling by interpolation between ngspice's points: within two of its steps
        assert mine.settling[0] == pytest.approx(_settling(t, y, half), abs=2 * T_MAX), c


STRING_DESIGNS = [
    Design(topology="string", bits=7, unit_r=100, ron_high=300, load_c=3e-12, load_r=2e4,
           ref_r=50, timing={"rise": 4e-9, "fall": 4e-9, "skew": [0, 0, 1e-9], "node_c": 2e-13}),
    Design(topology="string", output="buffer", gain=2, bits=7, unit_r=100, ron_high=300,
           timing={"rise": 6e-9, "fall": 2e-9, "node_c": 2e-13}),
    Design(topology="string", bits=7, unit_r=100, ron_high=300, load_c=3e-12, load_r=2e4,
           timing={"rise": 2e-9, "fall": 7e-9, "skew": [1e-9], "node_c": 2e-13}),
]


@pytest.mark.ngspice
@pytest.mark.parametrize("design", STRING_DESIGNS,
                         ids=["loaded", "buffered-break-first", "loaded-make-first"])
def test_long_string_agrees_with_ngspice(design):
    """A 7-bit string with node capacitance (128 nodes: beyond the dense solver, so the
    Laplace-domain one) against ngspice's transient of the whole circuit."""
    net, tm = build(design), timing_of(design)
    start = leg_skews(branches(net, tm.node_c, tm.load_c), tm.skew)
    t_stop = 2e-7
    for a, b in ((63, 64), (0, 127)):
        mine = solve_transitions(net, tm, np.array([a]), np.array([b]))
        assert mine.reason is None
        t, y = transient(net, a, b, start, tm.rise, tm.fall, tm.node_c, tm.load_c, t_stop, T_MAX)
        ts, ys = transient(net, a, b, np.zeros_like(start), 0.0, 0.0, tm.node_c, tm.load_c,
                           t_stop, T_MAX)
        # tolerances as in test_glitch_agrees_with_ngspice (ngspice's step ≤ T_MAX, 1 ps edges)
        area = _area(t, y) - _area(ts, ys)
        assert mine.impulse[0] == pytest.approx(area, rel=1e-3, abs=abs(design.vref) * 1e-12)
        diff = np.abs(y - np.interp(t, ts, ys))
        step = max(np.max(np.abs(np.diff(y))), np.max(np.abs(np.diff(ys))))
        assert abs(mine.peak[0] - np.max(diff)) <= step + 1e-6 * abs(y[-1] - y[0])
        assert mine.settling[0] == pytest.approx(_settling(t, y, abs(mine.lsb) / 2), abs=2 * T_MAX)


@pytest.mark.parametrize("design", SPICE_DESIGNS, ids=lambda d: d.topology)
def test_first_moment_identity(design):
    """With equal on-resistances the net impulse is −Σ_k ΔV_k·(skew_k + edge_k/2) exactly
    (ΔV_k: bit k's change of the final output; the first-moment identity, from memory)."""
    design = design.replace(ron_low=design.ron_high)
    net, tm = build(design), timing_of(design)
    n = design.bits
    codes = np.arange(1, 2**n)
    got = solve_transitions(net, tm, codes - 1, codes).impulse
    if design.topology == "segmented":  # a segment is no single bit: check leg by leg below
        expected = _per_leg_identity(net, tm, codes)
    else:
        ends = np.array([solve(net, codes=np.array([0, 1 << k])).vout for k in range(n)])
        weight = ends[:, 1] - ends[:, 0]
        bits = (codes[:, None] >> np.arange(n)) & 1
        change = bits - ((codes - 1)[:, None] >> np.arange(n) & 1)
        edge = np.where(change > 0, tm.rise, tm.fall)
        expected = -np.sum(change * weight * (np.array(tm.skew) + edge / 2), axis=1)
    np.testing.assert_allclose(got, expected, rtol=1e-9, atol=1e-12 * np.max(np.abs(expected)))


def _per_leg_identity(net, tm, codes):
    """−Σ ΔV_leg·(start_leg + edge/2) over the legs that switch, ΔV_leg the output change when
    that leg alone switches (superposition holds with equal on-resistances)."""
    br = branches(net, tm.node_c, tm.load_c)
    start = leg_skews(br, tm.skew)
    drive = np.asarray(br.decode(np.arange(net.n_codes)), bool)
    out = np.zeros(codes.size)
    for j, c in enumerate(codes):
        for leg in np.nonzero(drive[c] != drive[c - 1])[0]:
            alone = drive[c - 1].copy()
            alone[leg] = drive[c, leg]
            _, y = dc_state(br, np.array([alone, drive[c - 1]]))
            out[j] -= (y[0] - y[1]) * (start[leg] + (tm.rise if drive[c, leg] else tm.fall) / 2)
    return out


def test_simultaneous_switching_has_no_glitch():
    """With no skew and equal rise and fall, every switch moves at once: the output is the
    synchronous response delayed by half an edge (first-moment identity, from memory)."""
    d = SPICE_DESIGNS[0].replace(ron_low=50, timing={"rise": 4e-9, "fall": 4e-9, "node_c": 1e-12})
    net, tm = build(d), timing_of(d)
    codes = np.arange(1, 64)
    f = solve_transitions(net, tm, codes - 1, codes)
    step = np.diff(solve(net).vout)
    np.testing.assert_allclose(f.impulse, -step * 2e-9, rtol=1e-9, atol=1e-21)
    br = branches(net, tm.node_c, tm.load_c)
    actual, _ = respond(br, leg_skews(br, tm.skew), tm.rise, tm.fall, codes - 1, codes)
    assert np.allclose(actual.final, solve(net).vout[1:], rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize("bits", [8, 10, 12])
def test_ideal_quantisation_sinad(bits):
    """An ideal N-bit quantiser: SINAD ≈ 6.02·N + 1.76 dB (common practice; textbook
    quantisation noise q²/12 against a full-scale sine), 16,384 samples and 1,021 cycles."""
    codes = sine_codes(bits, 16384, 1021, 1.0).astype(float)
    f = spectrum_figures(codes, 1021)
    assert f["sinad_db"] == pytest.approx(6.02 * bits + 1.76, abs=0.5)
    assert f["enob"] == pytest.approx(bits, abs=0.5 / 6.02)


def _numpy_reference(values: np.ndarray, cycles: int) -> dict[str, float]:
    """SFDR, THD, SINAD from a full two-sided numpy FFT (independent of our one-sided sums)."""
    s = values.size
    p = np.abs(np.fft.fft(values)) ** 2
    sig = p[cycles] + p[s - cycles]
    rest = p.copy()
    rest[[0, cycles, s - cycles]] = 0
    harm_bins = set()
    for h in range(2, 11):
        b = h * cycles % s
        if b not in (0, cycles, s - cycles):
            harm_bins.update({b, s - b})
    folded = np.array([rest[b] + (rest[s - b] if s - b != b else 0) for b in range(1, s // 2 + 1)])
    return {"sinad_db": 10 * np.log10(sig / rest.sum()),
            "thd_db": 10 * np.log10(sum(p[b] for b in harm_bins) / sig),
            "sfdr_db": 10 * np.log10(sig / folded.max())}


@pytest.mark.parametrize("design", [
    Design(topology="r2r-voltage", bits=10, ron_high=40, ron_low=25, parts={"leg8": 20.4e3}),
    Design(topology="binary-weighted", output="divider", bits=8, ron_high=80, load_r=47e3,
           sine={"samples": 2048, "cycles": 97, "amplitude": 0.9}),
    Design(topology="segmented", bits=10, thermometer_bits=3, parts={"seg2": 10.3e3}),
], ids=lambda d: d.topology)
def test_spectrum_matches_numpy_fft(design):
    from rungwise.core.metrics.spectrum import design_sine

    codes, cycles = design_sine(design)
    v = solve(build(design)).vout[codes]
    mine = spectrum_figures(v, cycles)
    ref = _numpy_reference(v, cycles)
    for key in ("sinad_db", "thd_db", "sfdr_db"):  # numpy.fft, two-sided, to 0.01 dB
        assert mine[key] == pytest.approx(ref[key], abs=0.01), key
    assert harmonic_bins(codes.size, cycles).size >= 1


def test_settling_of_a_single_pole_matches_closed_form():
    """Only a load capacitance and instant edges: one pole, so the full-scale step settles to
    ½ LSB at τ·ln(2·(2^N − 1)) (common practice: exponential settling)."""
    d = Design(topology="r2r-voltage", bits=10, load_c=100e-12)
    net, tm = build(d), timing_of(d)
    f = solve_transitions(net, tm, np.array([0]), np.array([2**10 - 1]))
    tau = d.unit_r * 100e-12  # an R-2R ladder's output resistance is R at every code
    assert f.settling[0] == pytest.approx(tau * np.log(2 * (2**10 - 1)), rel=1e-9)
    assert f.impulse[0] == 0.0
    assert f.peak[0] == pytest.approx(0.0, abs=1e-12)
