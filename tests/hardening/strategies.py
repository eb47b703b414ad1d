"""Hypothesis strategies for the whole design space: every topology, FIELDS key and sub-table key."""

from __future__ import annotations

import math

from hypothesis import strategies as st

from rungwise.core import FIELDS, OUTPUTS_BY_TOPOLOGY, TOPOLOGIES, Design
from rungwise.core.build_style import BUILD_OPTIONS
from rungwise.core.design import MAX_OHMS, MIN_OHMS
from rungwise.core.mismatch import CHOICE_SETTINGS, NUMERIC_SETTINGS
from rungwise.core.parts.board import BOARD_KEYS
from rungwise.core.topologies import part_ids
from rungwise.core.types import MAX_ARRAY_BITS, SERIES


def in_range(low: float, high: float, low_open: bool = False) -> st.SearchStrategy[float]:
    """Any float in the range, with the ends and a log-spread of magnitudes well represented."""
    plain = st.floats(low, high, allow_nan=False, allow_infinity=False, exclude_min=low_open)
    ends = st.sampled_from([x for x in (low, high) if not (low_open and x == low)])
    if low >= 0:
        floor = max(low, 1e-30) if not low_open else max(low * 1.000001, 1e-30)
        if floor < high:
            spread = st.floats(math.log10(floor), math.log10(high)).map(lambda e: 10.0 ** e)
            spread = spread.filter(lambda x: (x > low if low_open else x >= low) and x <= high)
            return st.one_of(plain, ends, spread)
    return st.one_of(plain, ends)


def field_value(key: str, max_bits: int) -> st.SearchStrategy:
    """A valid value of one ``FIELDS`` key over its whole range, ends included (bits capped at
    ``max_bits``): two-sided ranges (``min_abs``) from both signs, 0 where ``zero_ok``, +∞ where
    ``allow_inf``, ``None`` where optional."""
    spec = FIELDS[key]
    if spec.integer:
        values = st.integers(int(spec.low), min(int(spec.high), max_bits))
    elif spec.min_abs:
        values = st.one_of(in_range(spec.min_abs, spec.high),
                           in_range(spec.min_abs, -spec.low).map(lambda x: -x))
    else:
        values = in_range(spec.low, spec.high, spec.low_open)
    if spec.zero_ok:
        values = st.one_of(values, st.just(0.0))
    if spec.allow_inf:
        values = st.one_of(values, st.just(math.inf))
    if spec.optional:
        values = st.one_of(values, st.none())
    return values


def _board_value(spec) -> st.SearchStrategy[float]:
    if spec.integer:
        return st.integers(int(spec.low), int(spec.high)).map(float)
    values = in_range(spec.low, spec.high) if spec.low >= 0 else st.floats(spec.low, spec.high)
    return st.one_of(values, st.just(spec.default)) if spec.allow_inf else values


@st.composite
def designs(draw, max_bits: int = 24) -> Design:
    """Any valid design: topology, output, series, every ``FIELDS`` key, name, and random subsets
    of the ``mismatch``, ``build``, ``board`` and ``parts`` tables, each over its whole range."""
    topology = draw(st.sampled_from(TOPOLOGIES))
    output = draw(st.sampled_from(OUTPUTS_BY_TOPOLOGY[topology]))
    values = {k: draw(field_value(k, max_bits)) for k in FIELDS}
    if topology == "string":
        values["bits"] = min(values["bits"], MAX_ARRAY_BITS)
    if values["thermometer_bits"] is not None:
        values["thermometer_bits"] = min(values["thermometer_bits"], values["bits"])
    mismatch = {}
    for key, choices in CHOICE_SETTINGS.items():
        if draw(st.booleans()):
            mismatch[key] = draw(st.sampled_from(choices))
    for key, spec in NUMERIC_SETTINGS.items():
        if draw(st.booleans()):
            mismatch[key] = draw(in_range(spec.low, spec.high, spec.low_open) if spec.low >= 0
                                 else st.floats(spec.low, spec.high))
    build = {k: draw(st.sampled_from(v)) for k, v in BUILD_OPTIONS.items() if draw(st.booleans())}
    board = {k: draw(_board_value(s)) for k, s in BOARD_KEYS.items() if draw(st.booleans())}
    temp = [board.get(k, BOARD_KEYS[k].default) for k in ("temp_low_c", "temp_high_c")]
    if temp[0] > temp[1]:  # the range must be ordered: keep the defaults instead
        board.pop("temp_low_c", None)
        board.pop("temp_high_c", None)
    rails = [board.get("rail_low", -math.inf), board.get("rail_high", math.inf)]
    if math.isinf(rails[0]):
        rails[0] = -math.inf
    if rails[0] >= rails[1]:
        board.pop("rail_low", None)
        board.pop("rail_high", None)
    base = Design(topology=topology, output=output, series=draw(st.sampled_from(SERIES)),
                  name=draw(st.text(max_size=12).filter(lambda s: "\x00" not in s)),
                  mismatch=mismatch, build=build, board=board, **values)
    ids = part_ids(topology, base.output, base.bits, base.thermometer_bits, base.build)
    chosen = draw(st.lists(st.sampled_from(ids), max_size=3, unique=True))
    parts = {pid: draw(in_range(MIN_OHMS, MAX_OHMS)) for pid in chosen}
    tempcos = draw(st.lists(st.sampled_from(ids), max_size=2, unique=True))
    if tempcos:
        spec = NUMERIC_SETTINGS["tempco"]
        mismatch["tempco_parts"] = {pid: draw(st.floats(spec.low, spec.high)) for pid in tempcos}
    return base.replace(parts=parts, mismatch=mismatch)
