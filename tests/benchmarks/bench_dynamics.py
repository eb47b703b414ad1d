"""Speed of the exact transient (glitch, peak and settling of every transition) and the test sine,
against a baseline measured in the same run.

Run on demand (pytest does not collect this folder)::

    .venv/bin/python tests/benchmarks/bench_dynamics.py [--repeat 3]

* ``all transitions``: ``solve_transitions`` over all 4,095 transitions of 12-bit networks with
  rise ≠ fall, a different skew per bit, node capacitance, a load and unequal on-resistances
  (the hardest case: the nodal matrix changes at every mid-edge) — target < 3 s each;
* baseline: the same transitions one at a time (the solver called per transition, no
  vectorisation; timed on 64 and scaled), and scipy ``solve_ivp`` (Radau, rtol 1e-8) of one
  transition's ODE, scaled to all — with the largest difference of its glitch impulse from ours;
* ``long string``: all 4,095 transitions (and the full-scale step) of a 12-bit resistor string
  with node capacitance and a load resistor, by the Laplace-domain solution; baseline: the dense
  solver on the same string at 6 bits (63 transitions; the largest it takes at once), per
  transition, scaled by its O(n³) to 12 bits — and the Laplace solution at 6 bits beside it;
  then the same 12-bit string whose taps make before they break (the two-stage solution);
* ``spectrum``: the 16,384-sample sine of a 16-bit ladder (``spectrum_figures``).
"""

from __future__ import annotations

import argparse
import os
import time

import numpy as np
from scipy.integrate import solve_ivp

from rungwise.core import Design
from rungwise.core.metrics.glitch import solve_transitions
from rungwise.core.metrics.spectrum import sine_codes, spectrum_figures
from rungwise.core.metrics.switching import branches, leg_skews
from rungwise.core.solve import solve
from rungwise.core.timing import timing_of
from rungwise.core.topologies import build

TARGET_S = 3.0
TIMING = {"rise": 5e-9, "fall": 2e-9, "node_c": 1e-12,
          "skew": [0.1e-9 * k for k in range(12)]}
DESIGNS = [
    Design(topology="r2r-voltage", bits=12, ron_high=40, ron_low=70, load_c=10e-12, timing=TIMING),
    Design(topology="binary-weighted", output="divider", bits=12, ron_high=40, ron_low=70,
           load_c=10e-12, timing=TIMING),
    Design(topology="segmented", bits=12, thermometer_bits=4, ron_high=40, ron_low=70,
           load_c=10e-12, timing=TIMING),
    Design(topology="r2r-current", bits=12, ron_high=40, ron_low=70, timing=TIMING),
]


def _timed(fn, repeat: int) -> tuple[float, float, object]:
    best_wall, best_cpu, out = np.inf, np.inf, None
    for _ in range(repeat):
        w, c = time.perf_counter(), time.process_time()
        out = fn()
        best_wall = min(best_wall, time.perf_counter() - w)
        best_cpu = min(best_cpu, time.process_time() - c)
    return best_wall, best_cpu, out


def _ode_impulse(design: Design, code: int) -> tuple[float, float]:
    """Glitch impulse of one transition by scipy's Radau integrator (the same model's ODE,
    written out densely per time), and the seconds it took."""
    net, tm = build(design), timing_of(design)
    br = branches(net, tm.node_c, tm.load_c)
    start = leg_skews(br, tm.skew)
    from rungwise.core.metrics.transient import _assemble, _per_branch, dc_state

    d_f = np.asarray(br.decode(np.array([code - 1])), bool)
    d_t = np.asarray(br.decode(np.array([code])), bool)
    w_f, w_t = br.weights(d_f), br.weights(d_t)
    edge = np.where(d_t, tm.rise, tm.fall)
    ideal = lambda d: np.where(d, br.ideal_high, br.ideal_low)  # noqa: E731
    dv = np.nan_to_num(ideal(d_t) - ideal(d_f)) * (d_f != d_t)
    cap = br.cap
    t_end = 3e-6

    def system(t, sync):
        if sync:
            w, e = w_t, np.zeros_like(w_t)
        else:
            passed = (start + edge / 2) <= t
            w = np.where(_per_branch(br, passed) > 0, w_t, w_f)
            s = np.clip((t - start) / np.where(edge > 0, edge, 1), 0, 1)
            e = _per_branch(br, (s - passed) * dv)
        return _assemble(br, w, e, np.zeros_like(e))

    def run(sync: bool) -> float:
        x0, _ = dc_state(br, d_f)

        def rhs(t, xs):
            x, _ = xs[:-1], xs[-1]
            G, r0, _, oc, d0, _ = system(t, sync)
            dx = (r0[0] - G[0] @ x) / cap
            y = oc[0] @ x + d0[0]
            return np.append(dx, y)

        G_end, r_end, _, oc_end, d_end, _ = system(t_end, sync)
        y_end = oc_end[0] @ np.linalg.solve(G_end[0], r_end[0]) + d_end[0]
        sol = solve_ivp(rhs, (0, t_end), np.append(x0[0], 0.0), method="Radau", rtol=1e-8,
                        atol=1e-14, max_step=2e-10)
        return sol.y[-1, -1] - y_end * t_end

    w = time.perf_counter()
    area = run(False) - run(True)
    return area, time.perf_counter() - w


STRING = Design(topology="string", bits=12, unit_r=10, ron_high=200, load_c=2e-12, load_r=1e5,
                timing={"node_c": 1e-13, "rise": 2e-9, "fall": 2e-9})


def _long_string(repeat: int) -> None:
    """The Laplace-domain string solution against the dense solver's cost, scaled."""
    def every(design: Design, method: str) -> tuple[float, int]:
        net, tm = build(design), timing_of(design)
        codes = np.arange(1, 2**design.bits)
        fc, tc = np.append(codes - 1, 0), np.append(codes, 2**design.bits - 1)
        wall, _, _ = _timed(lambda: solve_transitions(net, tm, fc, tc, method=method), repeat)
        return wall, fc.size

    small = STRING.replace(bits=6)
    dense6, count6 = every(small, "dense")
    laplace6, _ = every(small, "laplace")
    laplace12, count12 = every(STRING, "auto")
    scaled = dense6 / count6 * (4096 / 64) ** 3 * count12
    print(f"string, 6 bits, all {count6} transitions: dense {dense6:.2f} s, Laplace "
          f"{laplace6:.2f} s (×{dense6 / laplace6:.1f})")
    print(f"string, 12 bits, all {count12} transitions: Laplace {laplace12:.2f} s; the dense "
          f"solver scaled by O(n³) a transition: {scaled:.0f} s (×{scaled / laplace12:.0f})")
    overlap = STRING.replace(timing={"node_c": 1e-13, "rise": 1e-9, "fall": 4e-9})
    staged, _ = every(overlap, "auto")
    print(f"string, 12 bits, make before break (rise 1 ns, fall 4 ns): {staged:.2f} s "
          f"(×{staged / laplace12:.1f} of switching together)")


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--repeat", type=int, default=2)
    args = parser.parse_args()
    print(f"load average {os.getloadavg()[0]:.1f}")
    for d in DESIGNS:
        net, tm = build(d), timing_of(d)
        codes = np.arange(1, 2**d.bits)
        wall, cpu, figs = _timed(lambda net=net, tm=tm, codes=codes:
                                 solve_transitions(net, tm, codes - 1, codes), args.repeat)
        few = codes[::64]
        w1 = time.perf_counter()
        for c in few:
            solve_transitions(net, tm, np.array([c - 1]), np.array([c]))
        one_by_one = (time.perf_counter() - w1) * codes.size / few.size
        flag = "ok" if cpu < TARGET_S else "SLOWER THAN TARGET"  # CPU: the machine is shared
        print(f"{d.topology:16s} all {codes.size} transitions: wall {wall:.2f} s, cpu {cpu:.2f} s "
              f"(target cpu < {TARGET_S:g} s: {flag}); one at a time {one_by_one:.1f} s "
              f"(×{one_by_one / wall:.0f})")
        if d.topology in ("r2r-voltage", "segmented"):
            major = 2 ** (d.bits - 1)
            area, secs = _ode_impulse(d, major)
            ours = figs.impulse[major - 1]
            print(f"{'':16s} scipy Radau, one transition: {secs:.2f} s → all {secs * codes.size:.0f} s "
                  f"(×{secs * codes.size / wall:.0f}); impulse {area:.6e} vs ours {ours:.6e} "
                  f"(rel {abs(area - ours) / abs(ours):.1e})")
    _long_string(args.repeat)
    codes = sine_codes(16, 16384, 1021, 1.0)
    v = solve(build(Design(bits=16))).vout[codes]
    wall, _, _ = _timed(lambda: spectrum_figures(v, 1021), args.repeat)
    print(f"spectrum of a 16,384-sample sine, 16 bits: {wall * 1e3:.1f} ms")


if __name__ == "__main__":
    main()
