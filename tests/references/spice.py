"""ngspice as an independent solver for any :class:`rungwise.core.network.Network`.

The harness knows nothing about topologies: it writes the neutral description as a SPICE netlist
and reads back, per code,

* ``vout`` — the output (a node voltage; through an ideal gain block when buffered; for a
  virtual-ground output ``−feedback × (current into the summing node)`` from a current-controlled
  voltage source sensing the 0 V source that holds the summing node),
* ``iref`` — the current the source node delivers, ``−i(V)`` of its voltage source (SPICE reports
  the current into the + terminal),
* ``rout`` — the Thevenin resistance at the output terminal: a second copy of the circuit with every
  fixed node held at 0 V, the load left out and 1 A pushed into the output node (for a
  virtual-ground output: into the summing node, which is then free).

Two ways to run it:

* ``method="copies"`` (default): one operating copy and one probe copy per code in a single ``.op``
  run — plain linear resistors only, so the result is exact to ngspice's own arithmetic;
* ``method="sweep"``: one ``.dc`` sweep of a code voltage over the codes; each leg's switch is a
  behavioural current source whose conductance is ``ron``'s when its bit (decoded from the code
  voltage) says so and zero otherwise. Much faster for many codes; needs legs driven by one code
  bit each (the decoder is checked against the bit pattern). Still linear at every point.

Values go into the netlist as ``repr(float(x))``; the raw file is written in ASCII, 16 significant
digits. Runs are batched (``CODES_PER_RUN`` codes per ngspice process for the copies).
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import tempfile
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

import numpy as np

from rungwise.core.element_arrays import plain_equivalent
from rungwise.core.network import GROUND, Network

SpiceMethod = Literal["copies", "sweep"]

CODES_PER_RUN = 1024
"""Largest number of codes written into one ``.op`` netlist (two circuit copies each)."""

TIMEOUT_S = 600.0
"""Longest one ngspice process may run, seconds."""


@dataclass
class SpiceResult:
    """Per-code results read back from ngspice.

    Attributes
    ----------
    codes : ndarray of int, shape (n_codes,)
    vout : ndarray, shape (n_codes,), volts
    iref : ndarray, shape (n_codes,), amperes, positive when the source delivers current
    rout : ndarray, shape (n_codes,), ohms
    """

    codes: np.ndarray
    vout: np.ndarray
    iref: np.ndarray
    rout: np.ndarray


def ngspice_path() -> str | None:
    """The ngspice executable, or ``None`` when it is not installed."""
    return shutil.which("ngspice")


def require_ngspice() -> str:
    """The ngspice executable; skip the calling test when it is missing, fail instead when CI=true."""
    import pytest

    path = ngspice_path()
    if path is None:
        if os.environ.get("CI", "").lower() == "true":
            pytest.fail("ngspice is not installed, and CI=true requires the ngspice reference tests "
                        "to run (install the Debian package 'ngspice')")
        pytest.skip("ngspice is not installed (Debian package 'ngspice')")
    return path


# ------------------------------------------------------------------------------------------------
# values


@dataclass(frozen=True)
class _Values:
    """Every resistance of the network after the overrides, ohms."""

    resistors: tuple[float, ...]
    legs: tuple[float, ...]
    feedback: float

    @property
    def shunt(self) -> float:
        """A known resistance across the probe, ohms, so that an open output (infinite ``rout``)
        still gives ngspice a solvable circuit; :func:`_unshunt` removes it exactly."""
        return 1e6 * max((*self.resistors, *self.legs, 1.0))


def _unshunt(v_probe: np.ndarray, shunt: float) -> np.ndarray:
    """``rout`` from the probe voltage of 1 A into ``rout ‖ shunt``; ``inf`` where nothing but
    the shunt is there (its conductance is below 1e-6 of the shunt's)."""
    with np.errstate(divide="ignore"):  # a probe voltage of 0: an ideal short, rout = 0
        g = 1.0 / v_probe - 1.0 / shunt
        return np.where(g > 1e-6 / shunt, 1.0 / g, np.inf)


def _values(net: Network, ohms: Mapping[str, float] | None) -> _Values:
    ohms = dict(ohms or {})
    known = {r.part_id for r in net.resistors} | {leg.part_id for leg in net.legs}
    if net.output.kind == "virtual-ground":
        known.add("feedback")
    unknown = sorted(set(ohms) - known)
    if unknown:
        raise KeyError(f"no part {unknown[0]!r} in this network; parts: {sorted(known)}")
    return _Values(
        resistors=tuple(float(ohms.get(r.part_id, r.ohms)) for r in net.resistors),
        legs=tuple(float(ohms.get(leg.part_id, leg.ohms)) for leg in net.legs),
        feedback=float(ohms.get("feedback", net.output.feedback_ohms)),
    )


def _num(x: float) -> str:
    return repr(float(x))


# ------------------------------------------------------------------------------------------------
# netlists


class _Copy:
    """Node and element naming of one circuit copy (prefix keeps copies apart)."""

    def __init__(self, net: Network, prefix: str) -> None:
        self.prefix = prefix
        names = [*net.fixed, *net.unknown_nodes()]
        self.index = {name: i for i, name in enumerate(dict.fromkeys(names))}

    def node(self, name: str) -> str:
        return "0" if name == GROUND else f"{self.prefix}n{self.index[name]}"


def _operating_copy(net: Network, vals: _Values, drive: np.ndarray, prefix: str,
                    lines: list[str]) -> tuple[str, str]:
    """Lines of the circuit at one code; returns (vout expression, source current vector)."""
    c = _Copy(net, prefix)
    out = net.output
    src_vec = ""
    sum_source = ""
    for j, (name, volts) in enumerate(net.fixed.items()):
        if name == GROUND:
            continue
        el = f"v{prefix}f{j}"
        lines.append(f"{el} {c.node(name)} 0 DC {_num(volts)}")
        if name == net.source:
            src_vec = f"i({el})"
        if out.kind == "virtual-ground" and name == out.node:
            sum_source = el
    _passive(net, vals, drive, c, prefix, lines)
    if out.kind == "virtual-ground":
        lines.append(f"h{prefix}out {prefix}out 0 {sum_source} {_num(-vals.feedback)}")
        return f"v({prefix}out)", src_vec
    if out.buffered:
        lines.append(f"e{prefix}out {prefix}out 0 {c.node(out.node)} 0 {_num(out.gain)}")
        return f"v({prefix}out)", src_vec
    if np.isfinite(out.load_ohms):
        lines.append(f"r{prefix}load {c.node(out.node)} 0 {_num(out.load_ohms)}")
    return f"v({c.node(out.node)})", src_vec


def _probe_copy(net: Network, vals: _Values, drive: np.ndarray, prefix: str,
                lines: list[str]) -> str:
    """Lines of the zeroed circuit with 1 A into the output node; returns the rout vector."""
    c = _Copy(net, prefix)
    out = net.output
    for j, name in enumerate(net.fixed):
        if name == GROUND or (out.kind == "virtual-ground" and name == out.node):
            continue
        lines.append(f"v{prefix}f{j} {c.node(name)} 0 DC 0")
    _passive(net, vals, drive, c, prefix, lines)
    lines.append(f"i{prefix}probe 0 {c.node(out.node)} DC 1")
    lines.append(f"r{prefix}shunt {c.node(out.node)} 0 {_num(vals.shunt)}")
    return f"v({c.node(out.node)})"


def _passive(net: Network, vals: _Values, drive: np.ndarray, c: _Copy, prefix: str,
             lines: list[str]) -> None:
    """Resistors and the legs in the switch states of ``drive`` (bool, shape (n_legs,))."""
    for j, (r, ohms) in enumerate(zip(net.resistors, vals.resistors, strict=True)):
        lines.append(f"r{prefix}r{j} {c.node(r.a)} {c.node(r.b)} {_num(ohms)}")
    for j, (leg, ohms) in enumerate(zip(net.legs, vals.legs, strict=True)):
        on = bool(drive[j])
        rail = leg.high if on else leg.low
        if rail is None:
            continue
        ron = leg.ron_high if on else leg.ron_low
        if ron > 0:
            mid = f"{prefix}m{j}"
            lines.append(f"r{prefix}l{j} {c.node(leg.node)} {mid} {_num(ohms)}")
            lines.append(f"r{prefix}s{j} {mid} {c.node(rail)} {_num(ron)}")
        elif ohms == 0:  # an ideal tap switch: a 0 V source is an exact short (0 Ω is not)
            lines.append(f"v{prefix}z{j} {c.node(leg.node)} {c.node(rail)} DC 0")
        else:
            lines.append(f"r{prefix}l{j} {c.node(leg.node)} {c.node(rail)} {_num(ohms)}")


def copies_netlist(net: Network, codes: np.ndarray, ohms: Mapping[str, float] | None = None
                   ) -> tuple[str, list[tuple[str, str, str]]]:
    """A ``.op`` netlist with an operating and a probe copy per code.

    Returns
    -------
    text : str
        The netlist body (title and elements, no control block).
    vectors : list of (vout, source current, rout) vector names, one per code.
    """
    vals = _values(net, ohms)
    drive = net.decode(np.asarray(codes, dtype=np.int64))
    lines = ["* rungwise reference: one operating and one probe copy per code"]
    vectors = []
    for k in range(len(codes)):
        vout, isrc = _operating_copy(net, vals, drive[k], f"o{k}_", lines)
        rout = _probe_copy(net, vals, drive[k], f"p{k}_", lines)
        vectors.append((vout, isrc, rout))
    return "\n".join(lines), vectors


def _bit_of_leg(net: Network) -> list[int]:
    """Code bit driving each leg, checked against the network's own decoder on every code."""
    n_bits = max(1, int(net.n_codes - 1).bit_length())
    powers = net.decode(2 ** np.arange(n_bits, dtype=np.int64))  # (n_bits, n_legs)
    bits = []
    for j in range(len(net.legs)):
        hit = np.flatnonzero(powers[:, j])
        if hit.size != 1:
            raise ValueError(f"leg {net.legs[j].part_id} is not driven by exactly one bit; "
                             "use method='copies'")
        bits.append(int(hit[0]))
    codes = np.arange(net.n_codes, dtype=np.int64)
    expected = ((codes[:, None] >> np.array(bits)[None, :]) & 1).astype(bool)
    if not np.array_equal(expected, net.decode(codes)):
        raise ValueError("the decoder is not one bit per leg; use method='copies'")
    return bits


def sweep_netlist(net: Network, codes: np.ndarray, ohms: Mapping[str, float] | None = None
                  ) -> tuple[str, tuple[str, str, str], str]:
    """A ``.dc`` sweep netlist over ``codes`` (consecutive, step 1).

    Each leg is one behavioural current source per switch position,
    ``I = (V(node) − V(rail)) / (R_leg + ron) × state``, with state 1 or 0 decoded from the code
    voltage with ``floor`` (so the sweep, unlike the copies, adds leg and switch resistance itself).
    The netlist tightens ngspice's tolerances: with the default ``reltol`` of 1e-3 the Newton loop
    accepts a point before the switches follow a code step smaller than 0.1 % of the output.

    Returns
    -------
    text : str
    vectors : (vout, source current, rout) vector names
    sweep : str
        The ``dc`` command.
    """
    codes = np.asarray(codes, dtype=np.int64)
    if codes.size > 1 and not np.all(np.diff(codes) == 1):
        raise ValueError("a sweep needs consecutive codes")
    bits = _bit_of_leg(net)
    vals = _values(net, ohms)
    lines = ["* rungwise reference: code swept by a voltage source, switches decoded from it",
             ".options reltol=1e-12 vntol=1e-15 abstol=1e-18",
             "vcode code 0 DC 0"]
    all_on = np.ones(len(net.legs), dtype=bool)
    # operating and probe copies share the switched elements' shape; legs are rewritten below
    body_o: list[str] = []
    vout, isrc = _operating_copy(net, vals, all_on, "o_", body_o)
    body_p: list[str] = []
    rout = _probe_copy(net, vals, all_on, "p_", body_p)
    for prefix, body in (("o_", body_o), ("p_", body_p)):
        c = _Copy(net, prefix)
        leg_lines = {f"r{prefix}l{j}" for j in range(len(net.legs))} | {
            f"r{prefix}s{j}" for j in range(len(net.legs))}
        lines.extend(x for x in body if x.split()[0] not in leg_lines)
        for j, (leg, ohms_leg) in enumerate(zip(net.legs, vals.legs, strict=True)):
            bit = (f"(floor((v(code)+0.5)/{2 ** bits[j]})"
                   f"-2*floor((v(code)+0.5)/{2 ** (bits[j] + 1)}))")
            for pos, rail, ron, state in (("h", leg.high, leg.ron_high, bit),
                                          ("l", leg.low, leg.ron_low, f"(1-{bit})")):
                if rail is None:
                    continue
                a, b = c.node(leg.node), c.node(rail)
                lines.append(f"b{prefix}{pos}{j} {a} {b} "
                             f"I=(v({a})-v({b}))*{_num(1.0 / (ohms_leg + ron))}*{state}")
    first, last = (int(codes[0]), int(codes[-1])) if codes.size else (0, 0)
    return "\n".join(lines), (vout, isrc, rout), f"dc vcode {first} {last} 1"


# ------------------------------------------------------------------------------------------------
# running


def _parse_raw(path: Path) -> dict[str, np.ndarray]:
    """Vectors of an ASCII raw file by (lower-case) name, each of shape (n_points,)."""
    text = path.read_text()
    head, _, values = text.partition("Values:")
    names: list[str] = []
    in_vars = False
    for line in head.splitlines():
        if line.startswith("Variables:"):
            in_vars = True
            continue
        if in_vars and line.strip():
            names.append(line.split()[1].lower())
    tokens = values.split()
    width = len(names) + 1
    if not names or len(tokens) % width:
        raise RuntimeError(f"unreadable ngspice raw file {path}")
    table = np.array(tokens, dtype=object).reshape(-1, width)[:, 1:].astype(float)
    return {name: table[:, i] for i, name in enumerate(names)}


def run_netlist(body: str, analysis: str) -> dict[str, np.ndarray]:
    """Run ``body`` with one ``analysis`` (``op`` or a ``dc`` line) and return every vector.

    Raises
    ------
    RuntimeError
        ngspice is missing, failed, or wrote no results (the log's tail is in the message).
    """
    exe = ngspice_path()
    if exe is None:
        raise RuntimeError("ngspice is not installed")
    with tempfile.TemporaryDirectory(prefix="rungwise-spice-") as tmp:
        cir, raw, log = Path(tmp, "net.cir"), Path(tmp, "out.raw"), Path(tmp, "log.txt")
        cir.write_text(f"{body}\n.control\nset filetype=ascii\n{analysis}\nwrite {raw}\nquit 0\n"
                       ".endc\n.end\n")
        proc = subprocess.run([exe, "-b", "-o", str(log), str(cir)], capture_output=True, text=True,
                              timeout=TIMEOUT_S, check=False)
        log_text = log.read_text() if log.exists() else proc.stdout + proc.stderr
        if proc.returncode != 0 or not raw.exists() or "error" in log_text.lower():
            raise RuntimeError(f"ngspice failed (exit {proc.returncode}):\n{log_text[-2000:]}")
        return _parse_raw(raw)


def simulate(net: Network, codes: np.ndarray | None = None, ohms: Mapping[str, float] | None = None,
             method: SpiceMethod = "copies") -> SpiceResult:
    """Solve ``net`` with ngspice at ``codes`` (default: every code).

    Parameters
    ----------
    net : Network
        Any neutral network (built by a topology builder or by hand).
    codes : ndarray of int, shape (n_codes,), optional
        Codes to solve; ``method="sweep"`` needs them consecutive.
    ohms : mapping part id → ohms, optional
        Overrides of resistor and leg values (and ``feedback`` for a virtual-ground output).
    method : {"copies", "sweep"}

    Returns
    -------
    SpiceResult
        ``vout`` (V), ``iref`` (A), ``rout`` (Ω), each of shape (n_codes,).
    """
    net = plain_equivalent(net)  # array-held strings, leg groups and tap selectors as plain parts
    codes = np.arange(net.n_codes) if codes is None else np.asarray(codes, dtype=np.int64)
    if method == "sweep":
        body, (vout, isrc, rout), dc = sweep_netlist(net, codes, ohms)
        vec = run_netlist(body, dc)
        iref = -vec[isrc] if isrc else np.zeros(codes.size)
        return SpiceResult(codes, vec[vout], iref, _unshunt(vec[rout], _values(net, ohms).shunt))
    parts = []
    for start in range(0, codes.size, CODES_PER_RUN):
        chunk = codes[start:start + CODES_PER_RUN]
        body, vectors = copies_netlist(net, chunk, ohms)
        vec = run_netlist(body, "op")
        parts.append(np.array([[vec[v][0], -vec[i][0] if i else 0.0, vec[r][0]]
                               for v, i, r in vectors]).reshape(-1, 3))
    table = np.concatenate(parts) if parts else np.zeros((0, 3))
    return SpiceResult(codes, table[:, 0], table[:, 1],
                       _unshunt(table[:, 2], _values(net, ohms).shunt))


def assert_agree(actual: np.ndarray, expected: np.ndarray, rtol: float = 1e-9, what: str = "",
                 floor: float | None = None) -> None:
    """Per-code agreement to ``rtol`` relative; infinities must sit at the same codes.

    Exact zeros are compared with an absolute ``floor`` (default 1e-15 of the largest finite
    magnitude: double rounding), so a code whose true value is 0 does not demand bit-identical
    noise. A current that is zero at every code needs an explicit floor, e.g. a few ulp of the
    reference over the smallest resistance.
    """
    actual, expected = np.asarray(actual, float), np.asarray(expected, float)
    assert actual.shape == expected.shape, what
    np.testing.assert_array_equal(np.isinf(actual), np.isinf(expected), err_msg=f"{what}: open codes")
    finite = np.isfinite(expected)
    scale = float(np.max(np.abs(expected[finite]), initial=0.0))
    atol = 1e-15 * scale if floor is None else floor
    np.testing.assert_allclose(actual[finite], expected[finite], rtol=rtol, atol=atol, err_msg=what)


# ------------------------------------------------------------------------------------------------
# temperature coefficients and transients (real-part checks)


def with_tempco(body: str, net: Network, tc1: Mapping[str, float], temp_c: float, tnom_c: float
                ) -> str:
    """``body`` (from :func:`copies_netlist`) with a first-order coefficient ``tc1`` (1/K) on each
    named resistor and leg, analysed at ``temp_c`` with the values given at ``tnom_c`` (°C).

    ngspice: R(T) = R·(1 + tc1·(T − TNOM)); its default TNOM is 27 °C, so it is always set here.
    Switch on-resistances keep no coefficient.
    """
    ids = {"r": [r.part_id for r in net.resistors], "l": [g.part_id for g in net.legs]}
    element = re.compile(r"^r\w+?_([rl])(\d+)\s")  # r<copy prefix>_r<j> resistor, _l<j> leg
    title, *rest = body.splitlines()  # ngspice reads the first line as the title
    lines = [title, f".options tnom={_num(tnom_c)}", f".temp {_num(temp_c)}"]
    for line in rest:
        m = element.match(line)
        alpha = tc1.get(ids[m.group(1)][int(m.group(2))], 0.0) if m else 0.0
        lines.append(f"{line} tc1={_num(alpha)}" if alpha else line)
    return "\n".join(lines)


def simulate_at(net: Network, codes: np.ndarray, tc1: Mapping[str, float], temp_c: float,
                tnom_c: float) -> np.ndarray:
    """Output voltage at ``codes`` with temperature coefficients, volts, shape (n_codes,)."""
    codes = np.asarray(codes, dtype=np.int64)
    body, vectors = copies_netlist(net, codes)
    vec = run_netlist(with_tempco(body, net, tc1, temp_c, tnom_c), "op")
    return np.array([vec[v][0] for v, _, _ in vectors])


def full_scale_step(net: Network, load_c: float, t_stop: float, t_step: float
                    ) -> tuple[np.ndarray, np.ndarray]:
    """Transient of an unbuffered output loaded by ``load_c`` after a step from code 0 to the last
    code at t = 0 (1 ps edge).

    With equal switch resistances and an ideal reference, code 0 is the full-scale circuit with
    its source at 0 V, so the step is the source rising from 0 to Vref.

    Returns
    -------
    time : ndarray, seconds
    vout : ndarray, volts (same shape)
    """
    legs_equal = all(g.ron_high == g.ron_low for g in net.legs)
    if net.output.kind != "node" or net.output.buffered or not legs_equal:
        raise ValueError("a full-scale step is modelled for unbuffered outputs with equal switch "
                         "resistances only")
    vals = _values(net, None)
    lines = ["* rungwise reference: full-scale step into a capacitive load"]
    drive = net.decode(np.array([net.n_codes - 1]))[0]
    vout, src = _operating_copy(net, vals, drive, "o_", lines)
    source_el = src[2:-1]
    vref = net.fixed[net.source]
    lines = [f"{ln.split(' DC ')[0]} PWL(0 0 1e-12 {_num(vref)})" if ln.split()[0] == source_el
             else ln for ln in lines]
    lines.append(f"co_load {vout[2:-1]} 0 {_num(load_c)} IC=0")
    vec = run_netlist("\n".join(lines), f"tran {_num(t_step)} {_num(t_stop)} 0 {_num(t_step)} uic")
    return vec["time"], vec[vout.lower()]


def simulate_real_amplifier(net: Network, codes: np.ndarray, offset: float, open_loop: float
                            ) -> np.ndarray:
    """Output of a virtual-ground network with a real amplifier, volts, shape (n_codes,).

    The summing node is left free; the amplifier is a voltage-controlled source
    ``out = A·(v(+) − v(sum))`` with the input offset as a source ``Vos`` on its + input, and the
    feedback resistor joins ``sum`` and ``out``.
    """
    out = net.output
    if out.kind != "virtual-ground":
        raise ValueError("needs a virtual-ground output")
    vals = _values(net, None)
    drive = net.decode(np.asarray(codes, dtype=np.int64))
    lines = ["* rungwise reference: real amplifier on the summing node"]
    vectors = []
    for k in range(len(codes)):
        prefix = f"a{k}_"
        c = _Copy(net, prefix)
        for j, (name, volts) in enumerate(net.fixed.items()):
            if name not in (GROUND, out.node):
                lines.append(f"v{prefix}f{j} {c.node(name)} 0 DC {_num(volts)}")
        _passive(net, vals, drive[k], c, prefix, lines)
        s = c.node(out.node)
        lines += [f"r{prefix}fb {s} {prefix}out {_num(vals.feedback)}",
                  f"v{prefix}os {prefix}pos 0 DC {_num(offset)}",
                  f"e{prefix}amp {prefix}out 0 {prefix}pos {s} {_num(open_loop)}"]
        vectors.append(f"v({prefix}out)")
    vec = run_netlist("\n".join(lines), "op")
    return np.array([vec[v][0] for v in vectors])
