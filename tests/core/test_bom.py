"""Bill of materials: designators, grouping, arrays, ratings and the caution."""

from __future__ import annotations

import csv
import io

import pytest

from rungwise.core import Design, evaluate
from rungwise.core.parts.board import board_value
from rungwise.core.parts.bom import CAUTION, bill_of_materials, ranges, to_csv


def test_ranges():
    assert ranges("R", [1, 2, 3, 5, 7, 8]) == "R1–R3, R5, R7–R8"
    assert ranges("S", [4]) == "S4"


def test_ladder_bom_counts_every_unit():
    d = Design(bits=8, unit_r=33e3, series="E96")
    lines = bill_of_materials(evaluate(d))
    res = [ln for ln in lines if ln.kind == "resistor"]
    assert [(ln.ohms, ln.quantity) for ln in res] == [(66.5e3, 9), (33.2e3, 7)]
    assert res[0].designators == "R1–R8, R16"
    assert res[0].tolerance == 0.01  # common practice: E96 parts are ±1 %
    sw = next(ln for ln in lines if ln.kind == "switch")
    assert sw.quantity == 8
    assert sw.power_needed > 0  # ideal switches still carry the leg current


def test_two_unit_build_and_arrays():
    d = Design(bits=8, unit_r=33e3, series="E96", build={"two_r": "two-units"},
               board={"array_size": 8})
    (arr, *_) = bill_of_materials(evaluate(d))
    # 8 legs × 2 + terminator × 2 + 7 series = 25 units of 33.2 kΩ → 4 arrays of 8, 7 unused
    assert (arr.kind, arr.ohms, arr.quantity, arr.leftover) == ("array", 33.2e3, 4, 7)
    assert arr.designators == "RN1–RN4"


def test_tempco_and_tolerance_come_from_the_statistics_table():
    d = Design(bits=4, mismatch={"tolerance": 0.001, "tempco": 25e-6, "tempco_parts": {"leg3": 5e-6}})
    lines = [ln for ln in bill_of_materials(evaluate(d)) if ln.kind == "resistor"]
    assert {ln.tolerance for ln in lines} == {0.001}
    assert [ln.part_ids for ln in lines if ln.tempco == 5e-6] == [["leg3"]]


def test_overloads_are_flagged_with_the_caution():
    # 24 V across a 100 Ω MSB resistor: about 1.4 W against 0.1 W × 0.5 allowed
    d = Design(topology="binary-weighted", output="terminated-divider", bits=6, vref=24.0,
               unit_r=100.0, series="E24", board={"switch_limit": "10m"})
    lines = bill_of_materials(evaluate(d))
    msb = next(ln for ln in lines if "bit5" in ln.part_ids)
    assert msb.flagged
    assert msb.power_needed == pytest.approx(evaluate(d).parts[5]["power_max"] / 0.5, rel=1e-12)
    assert next(ln for ln in lines if ln.kind == "switch").flagged
    text = to_csv([("hot", lines)])
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[-1] == ["caution", CAUTION]
    assert "datasheet" in CAUTION
    assert "local codes" in CAUTION
    calm = to_csv([("cool", bill_of_materials(evaluate(Design(bits=4))))])
    assert "caution" not in calm


def test_large_string_bom_lists_every_resistor_with_its_power():
    # a 12-bit string, open output: one current Vref/(2^N·R) through every resistor, so each
    # dissipates Vref²/(4^N·R) (common practice: Ohm's law along a series string)
    d = Design(topology="string", bits=12, vref=2.5, unit_r=1e3)
    lines = bill_of_materials(evaluate(d))
    resistors = [line for line in lines if line.kind == "resistor"]
    assert sum(line.quantity for line in resistors) == 4096
    expected = 2.5**2 / (4.0**12 * 1e3) / board_value(d, "derating")
    assert [line.power_needed for line in resistors] == [pytest.approx(expected, rel=1e-12)]
    assert "network this large" not in resistors[0].note
