"""Property tests over the whole design space: valid designs evaluate to finite figures, invalid
ones are refused by name, design files round-trip and damaged ones raise only our own error.

Budgets: ``tests/hardening/profiles.py`` (``RUNGWISE_HYPOTHESIS_PROFILE=long`` for the long run).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from rungwise.core import FIELDS, Design, DesignError, evaluate
from rungwise.core import designfile as dfile
from rungwise.core.build_style import BUILD_OPTIONS
from rungwise.core.design import MAX_OHMS, MIN_OHMS
from rungwise.core.errors import RungwiseError
from rungwise.core.figure_meaning import GLITCH_KEYS, TRANSIENT_KEYS
from rungwise.core.metrics.amplifier import has_amplifier
from rungwise.core.mismatch import CHOICE_SETTINGS, NUMERIC_SETTINGS
from rungwise.core.parts.board import BOARD_KEYS
from rungwise.core.targets import AnalysisSettings

from .profiles import budget
from .strategies import designs

ARRAYS = ("vout", "iref", "inl_endpoint", "inl_bestfit", "dnl")


def _allowed_non_finite(ev, key: str) -> bool:
    """Summary figures that are not finite by definition (each documented where it is computed)."""
    net, s = ev.network, ev.summary
    if key in ev.no_meaning:  # core/figure_meaning.py: no meaning for the inputs, NaN with a reason
        return math.isnan(s[key])
    if key in {"settling_tau", "settling_time"}:  # metrics/settling.py: NaN behind an amplifier
        return has_amplifier(net) and math.isnan(s[key])
    if key == "amp_inl_added":  # metrics/amplifier.py: NaN when the real output is flat (the
        # rails clip every code alike, or the steps are lost in round-off beside a large offset)
        return (s["amp_codes_clipped"] > 0 or s["amp_gain_error"] == -1.0) and math.isnan(s[key])
    if key.startswith("drift_"):  # metrics/drift.py: NaN where 1 + α·ΔT takes a part to ≤ 0 Ω
        return math.isnan(s[key]) and _coefficient_breaks_down(ev.design)
    if key in GLITCH_KEYS + TRANSIENT_KEYS:  # metrics/glitch.py: NaN when the inputs give no
        # dynamics, with the reason beside it
        return math.isnan(s[key]) and key in ev.no_meaning
    if key in {"rout_max", "rout_min"}:  # an output fed by a current with no resistive path
        return math.isinf(s[key]) and s[key] > 0
    if key in {"worst_case_min_step", "worst_case_transition"}:  # worst_case.py: NaN where no
        # search was made (a string needs none; a network beyond the search's limit)
        note = ev.notes["guaranteed_monotonic"]
        return math.isnan(s[key]) and ("string" in note or note.startswith("not decided"))
    return False


def _coefficient_breaks_down(design) -> bool:
    from rungwise.core.parts.board import board_value

    alphas = [design.mismatch.get("tempco", 0.0), *design.mismatch.get("tempco_parts", {}).values()]
    ref = design.mismatch.get("reference_c", 25.0)
    ends = [board_value(design, "temp_low_c"), board_value(design, "temp_high_c")]
    return any(1 + a * (t - ref) <= 0 for a in alphas for t in ends)


@budget(60)
@given(design=designs(max_bits=10))
def test_every_valid_design_evaluates_to_finite_figures(design):
    try:
        ev = evaluate(design)
    except DesignError as exc:  # a snapped part outside its series' range is refused by name
        refused = exc
    else:
        refused = None
    if refused is not None:
        assert refused.field.startswith("series")
        assert design.series != "exact"
        return
    n = 2 ** design.bits
    assert ev.vout.shape == ev.rout.shape == ev.iref.shape == (n,)
    for name in ARRAYS:
        assert np.all(np.isfinite(getattr(ev, name))), name
    # rout is +inf only where the output has no resistive path (a current-mode ladder's code 0);
    # it is never NaN or negative
    rout = ev.rout
    assert not np.any(np.isnan(rout))
    assert np.all(rout >= 0)
    if np.any(np.isinf(rout)):
        assert design.topology == "r2r-current"
    for key, value in ev.summary.items():
        if isinstance(value, float) and not math.isfinite(value):
            assert _allowed_non_finite(ev, key), (key, value)
    for part in ev.parts:
        assert math.isfinite(part["ohms"])
        assert part["ohms"] > 0


@budget(120)
@given(design=designs())
def test_every_design_survives_its_dict_and_its_file(design):
    again = Design.from_dict(design.to_dict())
    assert again == design
    doc = dfile.DesignFile([design], settings={}, analysis=AnalysisSettings())
    back = dfile.loads(dfile.dumps(doc))
    assert [d.to_dict() for d in back.candidates] == [design.to_dict()]


# --- invalid values are refused with the field's name ------------------------------------------

def _bad_field_values(key: str) -> st.SearchStrategy:
    spec = FIELDS[key]
    below = st.floats(-1e300, spec.low, exclude_max=not spec.low_open)
    if spec.zero_ok:
        below = below.filter(lambda x: x != 0)
    above = st.floats(spec.high, 1e300, exclude_min=True)
    bad = [below, above, st.just(math.nan), st.just(-math.inf),
           st.sampled_from(["abc", "1..2", "--1", "4k7k", "1 %%", "∞x"])]
    if not spec.allow_inf:
        bad.append(st.just(math.inf))
    if spec.integer:
        bad.append(st.floats(spec.low, spec.high).filter(lambda x: x != int(x)))
    if not spec.optional:
        bad.append(st.sampled_from([None, "", "default"]))
    if spec.min_abs:
        bad.append(st.sampled_from([0.0, -0.0, "0"]))
        bad.append(st.floats(-spec.min_abs, spec.min_abs, exclude_min=True, exclude_max=True))
    return st.one_of(bad)


@st.composite
def _invalid_change(draw) -> tuple[str, dict]:
    """(field expected in the refusal, ``Design.replace`` keywords)."""
    kind = draw(st.sampled_from(["field", "mismatch", "board", "build", "part", "unknown"]))
    if kind == "field":
        key = draw(st.sampled_from(sorted(FIELDS)))
        return key, {key: draw(_bad_field_values(key))}
    if kind == "mismatch":
        key = draw(st.sampled_from(sorted([*NUMERIC_SETTINGS, *CHOICE_SETTINGS])))
        if key in CHOICE_SETTINGS:
            value = draw(st.text(max_size=8).filter(lambda s: s not in CHOICE_SETTINGS[key]))
        else:
            spec = NUMERIC_SETTINGS[key]
            value = draw(st.one_of(st.floats(spec.high, 1e300, exclude_min=True),
                                   st.floats(-1e300, spec.low, exclude_max=not spec.low_open),
                                   st.just(math.nan), st.just("zz")))
        return f"mismatch.{key}", {"mismatch": {key: value}}
    if kind == "board":
        key = draw(st.sampled_from(sorted(BOARD_KEYS)))
        spec = BOARD_KEYS[key]
        value = draw(st.one_of(st.floats(spec.high, 1e300, exclude_min=True).filter(math.isfinite),
                               st.floats(-1e300, spec.low, exclude_max=True),
                               st.just(math.nan), st.just("zz")))
        return f"board.{key}", {"board": {key: value}}
    if kind == "build":
        key = draw(st.sampled_from(sorted(BUILD_OPTIONS)))
        value = draw(st.text(max_size=8).filter(lambda s: s not in BUILD_OPTIONS[key]))
        return f"build.{key}", {"build": {key: value}}
    if kind == "part":
        value = draw(st.one_of(st.floats(max_value=MIN_OHMS, exclude_max=True),
                               st.floats(MAX_OHMS, exclude_min=True),
                               st.just(math.nan), st.just("zz")))
        return "parts.leg0", {"parts": {"leg0": value}}
    name = draw(st.text("abcdefgh_", min_size=1, max_size=10))
    return name, {name: 1.0}


@budget(200)
@given(change=_invalid_change())
def test_every_invalid_value_is_refused_by_name(change):
    field, kwargs = change
    if field in Design.__dataclass_fields__ and field not in FIELDS:
        return  # a drawn unknown name that happens to be a real key
    base = Design(topology="r2r-voltage", bits=6)
    with pytest.raises(DesignError) as info:
        base.replace(**kwargs)
    assert info.value.field == field
    assert str(info.value).startswith(f"{field}: ")


# --- damaged design files raise only our own error ---------------------------------------------

_GOOD_FILE = dfile.dumps(dfile.DesignFile(
    [Design(topology="segmented", bits=10, thermometer_bits=4, mismatch={"tolerance": 0.001},
            board={"power_rating": 0.25}, build={"two_r": "two-units"}, parts={"seg0": 5e3}),
     Design(topology="binary-weighted", output="summing-amp", load_r=1e5)],
    settings={"view": "dnl"}, analysis=AnalysisSettings(trials=500, seed=7)))

_PIECES = st.sampled_from(["=", "[", "]", "{", "}", "\"", "'", ",", "\n", "#", ".", "-", "0", "1e999",
                           "nan", "inf", "true", "bits", "topology", "candidates", "[[candidate]]",
                           "parts", "mismatch", "é", "\x00", "\ud7ff", " ", "9" * 40])


@st.composite
def _damaged_files(draw) -> str:
    text = draw(st.sampled_from([_GOOD_FILE, _GOOD_FILE.replace("sealed = true\n", "", 1)]))
    for _ in range(draw(st.integers(1, 4))):
        at = draw(st.integers(0, len(text)))
        if draw(st.booleans()):
            text = text[:at] + text[at + draw(st.integers(1, 30)):]
        else:
            text = text[:at] + draw(_PIECES) + text[at:]
    return text


@budget(200)
@given(text=st.one_of(_damaged_files(), st.text(max_size=200)))
def test_a_damaged_design_file_raises_only_our_error(text):
    try:
        doc = dfile.loads(text)
    except RungwiseError as exc:
        message = str(exc)
    else:
        message = None
    if message is not None:
        assert message
        return
    assert doc.candidates
    assert all(isinstance(d, Design) for d in doc.candidates)


# --- defects the property tests found, kept as plain examples ----------------------------------

def test_segment_part_tempco_is_accepted_on_a_segmented_design():
    design = Design(topology="segmented", bits=6, thermometer_bits=2,
                    mismatch={"tempco_parts": {"seg0": 25e-6}})
    assert design.mismatch["tempco_parts"] == {"seg0": 25e-6}


def test_open_lower_rail_round_trips_through_a_file():
    design = Design(topology="r2r-voltage", output="buffer", board={"rail_low": "open"})
    back = dfile.loads(dfile.dumps(dfile.DesignFile([design], settings={},
                                                    analysis=AnalysisSettings())))
    assert back.candidates[0].board["rail_low"] == -math.inf


def test_a_coefficient_taking_parts_below_zero_ohms_gives_no_drift_figures():
    # 1 + 0.008/K · (0 − 193) K < 0 at the cold end
    design = Design(bits=4, mismatch={"tempco": 0.008, "reference_c": 193.0})
    s = evaluate(design).summary
    assert math.isnan(s["drift_inl_low"])
    assert math.isnan(s["drift_gain_error_high"])
    assert math.isfinite(s["max_abs_inl_endpoint"])


def test_rails_clipping_every_code_leave_the_added_inl_undefined():
    design = Design(topology="r2r-voltage", output="buffer", bits=4, vref=3.3,
                    board={"rail_low": 5.0, "rail_high": 6.0})
    s = evaluate(design).summary
    assert s["amp_codes_clipped"] == 16
    assert math.isnan(s["amp_inl_added"])


def test_string_power_with_a_tiny_reference_resistance_is_solved():
    design = Design(topology="string", bits=1, vref=-1.0, unit_r=33554433.0, ron_low=1.001,
                    ref_r=0.001, load_r=228881121.001)
    s = evaluate(design).summary
    assert math.isfinite(s["power_total_max"])
    assert s["power_total_max"] > 0


def test_a_milliohm_part_in_a_string_of_megohms_gives_power_figures():
    # found by the long profile: the power figures' general solve lost the 98 MΩ part in round-off
    design = Design(topology="string", bits=2, vref=-1.0, unit_r=1.6387684903127049,
                    ron_low=0.001, ref_r=6838329.0, load_r=0.001,
                    parts={"string0": 97773970.0, "string1": 0.001})
    s = evaluate(design).summary
    assert math.isfinite(s["power_total_max"])
    assert s["power_total_max"] > 0


def test_a_signal_lost_beside_the_amplifier_offset_leaves_the_added_inl_undefined():
    # found by the long profile: a 1e-16 V full scale behind a 1 V offset is flat in double
    # precision, so the amplifier's endpoint line (and the INL it adds) is undefined
    design = Design(topology="r2r-voltage", output="buffer", bits=1, vref=1e-6, unit_r=0.015625,
                    ron_high=1.0, ron_low=1.0, ref_r=281474976.0, load_r=1.0,
                    board={"amp_offset": 1.0})
    s = evaluate(design).summary
    assert s["amp_gain_error"] == -1.0
    assert math.isnan(s["amp_inl_added"])
    assert s["amp_codes_clipped"] == 0


def test_a_snapped_string_keeps_its_exact_power_figures():
    # found by the long profile: snapping replaced the string but the tap still pointed at the
    # unsnapped one, so the exact string power form was skipped and the figures came out NaN
    design = Design(topology="string", bits=10, vref=1.0, unit_r=1.0, ron_high=1.0, load_r=1.0,
                    series="E3")
    s = evaluate(design).summary
    assert math.isfinite(s["power_total_max"])
    assert s["power_total_max"] > 0
