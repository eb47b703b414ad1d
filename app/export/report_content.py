"""The design-review report's content, without Qt: figures gathered once, written as blocks.

:func:`gather` evaluates every candidate, runs the Monte Carlo statistics with the file's trial
count and seed (unless asked not to), finds the loosest tolerance grade that meets the targets
and derives the recommendation. :func:`report_blocks` turns that into headings, paragraphs,
tables and figures (``report_blocks``) that ``report_pdf`` lays out on pages. Every number comes
from the gathered results and is written by the one formatter
(:func:`rungwise.core.formatting.format_quantity`).
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any

from rungwise.core import FIELDS, SUMMARY_KEYS, Evaluation, evaluate
from rungwise.core.designfile import DesignFile, dumps
from rungwise.core.figure_registry import FIGURES, figure
from rungwise.core.formatting import EDIT_DIGITS, format_percent, format_quantity, yes_no
from rungwise.core.review import (
    Recommendation,
    bom_lines,
    cautions,
    describe_targets,
    recommend,
)
from rungwise.core.stats_result import STAT_UNITS
from rungwise.core.version import program_version

from ..plots.specs import PlotSpec, comparison_plots, spread_plot
from ..window.comparison_state import with_colours
from .report_blocks import Block, Figure, Heading, PageBreak, Paragraph, Table

MAX_PART_ROWS = 40
"""Parts listed per candidate in the report; the rest are counted (all are in the exports)."""

GRADE_TRIALS = 1000
"""Most boards per tolerance grade when looking for the loosest grade that passes."""


def checksum(text: str | bytes) -> str:
    """A short content checksum: the first 8 hex digits of SHA-256."""
    data = text.encode("utf-8") if isinstance(text, str) else text
    return hashlib.sha256(data).hexdigest()[:8]


# --- gathering ---------------------------------------------------------------------------------
@dataclass
class ReviewData:
    """Everything the report shows, computed once.

    Attributes
    ----------
    doc : DesignFile
    evs : list[Evaluation]
    stats : list
        ``MonteCarloResult`` per candidate, or ``None`` where statistics were not run.
    grades : list
        Per candidate ``(loosest grade or None, YieldCurve)``, or ``None`` where not run.
    recommendation : Recommendation
    title, source : str
        The report's title and the design file's name (``""`` for an unsaved comparison).
    notes : list[str]
        Why statistics were left out for a candidate, if they were.
    colours : list[str]
        Each candidate's colour (``#rrggbb``), as in the window.
    checksum, version : str
    search : SearchSummary or None
        The design search's question and answer when the file holds a ``[search]`` table.
    """

    doc: DesignFile
    evs: list[Evaluation]
    stats: list[Any]
    recommendation: Recommendation
    title: str = "Design review"
    notes: list[str] = field(default_factory=list)
    grades: list[Any] = field(default_factory=list)
    source: str = ""
    colours: list[str] = field(default_factory=list)
    checksum: str = ""
    version: str = ""
    search: Any = None
    made: str = ""
    reasons: list[str] = field(default_factory=list)

    @property
    def plots(self) -> list[PlotSpec]:
        """The plots the report embeds (the INL spread only when statistics were run)."""
        spread = spread_plot(self.evs, self.stats)
        return comparison_plots(self.evs) + ([spread] if spread is not None else [])


class ReportCancelled(Exception):
    """Raised by :func:`gather` when its cancel event is set before every candidate is evaluated
    (the caller that cancelled discards the report)."""


def gather(doc: DesignFile, title: str = "Design review", with_stats: bool = True,
           cancel: Any = None, progress: Callable[[str], None] | None = None,
           source: str = "", file_bytes: bytes | None = None,
           evaluations: Sequence[Evaluation | None] | None = None) -> ReviewData:
    """Evaluate the candidates, run statistics (file's trials and seed) and the loosest passing
    tolerance grade, derive the recommendation.

    ``cancel`` (a ``threading.Event``) is checked between evaluations (:class:`ReportCancelled`)
    and Monte Carlo batches; once it is set the remaining statistics are skipped (a caller that
    cancels discards the result). ``progress``,
    when given, receives a line of text about ten times per candidate's statistics (boards done).
    ``source`` names the design file and ``file_bytes`` is its content (for the checksum; the
    document's own text when not given). ``evaluations`` may give candidates' evaluations already
    made (the window's live results; ``None`` entries are evaluated here).
    """
    known = list(evaluations) if evaluations is not None else [None] * len(doc.candidates)
    evs = []
    for d, ev in zip(doc.candidates, known, strict=True):
        if cancel is not None and cancel.is_set():  # a closing window waits for this worker
            raise ReportCancelled("the report was cancelled")
        evs.append(ev if ev is not None else evaluate(d))
    stats: list[Any] = [None] * len(evs)
    grades: list[Any] = [None] * len(evs)
    notes: list[str] = []
    if with_stats:
        from rungwise.core.errors import DesignError
        from rungwise.core.grades import iter_yield_vs_tolerance
        from rungwise.core.montecarlo import iter_monte_carlo

        trials = doc.analysis.trials
        for i, d in enumerate(doc.candidates):
            if cancel is not None and cancel.is_set():
                break
            try:
                for partial in iter_monte_carlo(d, trials, doc.analysis.seed, cancel=cancel,
                                                targets=doc.targets,
                                                reports=10 if progress else 1):
                    stats[i] = partial
                    if progress is not None:
                        progress(f"statistics of {d.label} ({i + 1} of {len(evs)}): "
                                 f"{partial.done:,} of {trials:,} boards")
                curve = None
                # each grade stops once decided against the target yield (the rule the
                # Statistics view and the design search use)
                for curve in iter_yield_vs_tolerance(d, trials=min(trials, GRADE_TRIALS),
                                                     seed=doc.analysis.seed,
                                                     targets=doc.targets, cancel=cancel,
                                                     target_yield=doc.targets.min_yield):
                    if progress is not None:
                        progress(f"tolerance grades of {d.label}: {len(curve.yields)} of "
                                 f"{len(curve.steps)}")
                if curve is not None and len(curve.yields) == len(curve.steps):
                    grades[i] = (curve.loosest(doc.targets.min_yield), curve)
            except DesignError as exc:
                notes.append(f"{d.label}: statistics not run ({exc})")
    yields = [s.yield_all if s is not None else None for s in stats]
    rec = recommend(evs, doc.targets, yields if any(y is not None for y in yields) else None,
                    cancel=cancel)
    colours = [c.colour for c in with_colours(doc.candidates, _colours(doc))]
    search = _search(doc, cancel) if with_stats else None
    reasons = _nominal_reasons(doc, grades, cancel)
    return ReviewData(doc, evs, stats, rec, title, notes, grades, source, colours,
                      checksum(file_bytes if file_bytes is not None else dumps(doc)),
                      program_version(), search,
                      _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC"), reasons)


def _colours(doc: DesignFile) -> list[str]:
    found = doc.settings.get("colours", []) if isinstance(doc.settings, dict) else []
    return [str(c) for c in found] if isinstance(found, list) else []


def _search(doc: DesignFile, cancel: Any) -> Any:
    """The design search's summary when the file asks one (``[search]``), else ``None``."""
    from rungwise.core.search_report import file_search, search_summary

    result = file_search(doc, cancel=cancel)
    return None if result is None else search_summary(result, doc.candidates[0], doc.cost)


# --- blocks ------------------------------------------------------------------------------------
def _swatches(data: ReviewData, first: int) -> dict[int, str]:
    return {first + i: c for i, c in enumerate(data.colours)}


def _cell(ev: Evaluation, key: str, notes: dict[str, int] | None = None) -> str:
    """A figure's cell; a figure with no meaning for the inputs says so — with ``notes`` given,
    as ``no meaning (n)`` whose reason is listed once under the table (:func:`_note_lines`)."""
    from rungwise.core.figure_meaning import numbered, shown

    reason = ev.no_meaning.get(key)
    if reason and notes is not None:
        return numbered(reason, notes)
    if reason:
        return shown(reason)
    label, unit = SUMMARY_KEYS.get(key, (key, ""))
    value = ev.summary.get(key)
    if isinstance(value, float) and label.strip() == "at code" and math.isfinite(value):
        value = int(value)
    return format_quantity(value, unit)


KEY_FIGURES = ("lsb", "max_abs_inl_endpoint", "max_abs_inl_bestfit", "max_abs_dnl", "monotonic",
               "gain_error", "rout_max", "iref_max", "power_total_max")
"""The figures page 1 sets side by side."""


def _yield_text(data: ReviewData, i: int) -> str:
    s = data.stats[i]
    if s is None:
        return "not computed"
    y = s.yield_all
    return _decision(y.passed, y.trials, data.doc.targets.min_yield).yield_text()


def _decision(passed: int, trials: int, target: float):
    from rungwise.core.yield_decision import decide_yield

    return decide_yield(int(passed), int(trials), float(target))


def _page_one(data: ReviewData) -> list[Block]:
    doc, evs = data.doc, data.evs
    t = doc.targets
    names = ", ".join(e.design.label for e in evs)
    src = f" from {data.source}" if data.source else ""
    ran = any(s is not None for s in data.stats)
    boards = (f"({doc.analysis.trials:,} random boards, seed {doc.analysis.seed})" if ran else
              "(statistics were not run for this report, so yields are not judged)")
    out: list[Block] = [
        Heading(data.title, 0),
        Paragraph(f"Candidates: {names}. Made by Rungwise {data.version} on {data.made}{src}.",
                  "small"),
        Heading("The question", 2),
        Paragraph(f"Which candidate meets the targets — {describe_targets(t)} — with at least "
                  f"{format_percent(t.min_yield)} of boards passing when the parts vary as each "
                  f"candidate's tolerance says {boards}? Among those that do, the one with the "
                  "fewest parts."),
        Heading("The answer", 2),
        Paragraph(data.recommendation.text, "verdict"),
        Heading("What would pass", 2),
    ]
    rows = []
    for i, (ev, v) in enumerate(zip(evs, data.recommendation.verdicts, strict=True)):
        rows.append([ev.design.label, yes_no(v.passes) if v.passes else "no — " + "; ".join(v.failures),
                     *_grade_cells(data, i)])
    out.append(Table(["Candidate", "Meets the targets now",
                      f"Loosest grade for {format_percent(t.min_yield)} yield", "Yield at that grade"],
                     rows, "llrr", row_swatches=dict(enumerate(data.colours))))
    for i, ev in enumerate(evs):
        reason = _nominal_reason(data, i)
        if reason:
            out.append(Paragraph(f"{ev.design.label}: {reason}", "small"))
    if data.search is not None:
        out.append(Paragraph("Design search: " + data.search.answer))
    out.append(Heading("Key figures", 2))
    notes: dict[str, int] = {}
    rows = [[_label(k), *[_cell(e, k, notes) for e in evs]] for k in KEY_FIGURES]
    rows.append([FIGURES["yield_all"].label, *[_yield_text(data, i) for i in range(len(evs))]])
    rows.append(["Parts (resistors + switches + amplifiers)",
                 *[str(v.parts) for v in data.recommendation.verdicts]])
    out.append(Table(["Figure", *[e.design.label for e in evs]], rows,
                     swatches=_swatches(data, 1)))
    out += _note_lines(notes)
    inl = next(p for p in data.plots if p.name == "inl")
    out.append(Figure("plot", inl, 0.36, colours=tuple(data.colours), shrink=0.6))
    out.append(PageBreak())
    return out


def _grade_cells(data: ReviewData, i: int) -> list[str]:
    g = data.grades[i] if i < len(data.grades) else None
    if g is None:
        return ["not computed", "—"]
    grade, curve = g
    if grade is None:
        tightest = float(curve.steps.min())
        best = curve.yields[int(curve.steps.argmin())]
        return [f"none down to ±{format_percent(tightest)}",
                _decision(best.passed, best.trials, data.doc.targets.min_yield).yield_text()]
    k = [float(s) for s in curve.steps].index(grade)
    y = curve.yields[k]
    return [f"±{format_percent(grade)}",
            _decision(y.passed, y.trials, data.doc.targets.min_yield).yield_text()]


def _nominal_reasons(doc: DesignFile, grades: list[Any], cancel: Any) -> list[str]:
    """Why a candidate that no grade helps already fails nominally (``""`` for the others);
    worked out here on the worker, with a cancel check before each."""
    from rungwise.core.nominal_reason import nominal_failure

    out = []
    for d, g in zip(doc.candidates, grades, strict=True):
        if g is None or g[0] is not None or (cancel is not None and cancel.is_set()):
            out.append("")
            continue
        found = nominal_failure(d, doc.targets)
        out.append(found.text() if found is not None else "")
    return out


def _nominal_reason(data: ReviewData, i: int) -> str:
    return data.reasons[i] if i < len(data.reasons) else ""


def _label(key: str) -> str:
    """A figure's label (per-trial keys such as ``offset`` read as ``offset_error``)."""
    found = SUMMARY_KEYS.get(key) or SUMMARY_KEYS.get(f"{key}_error") or (key, "")
    return found[0].strip()


def _input_text(key: str, value: Any) -> str:
    from rungwise.core.display_names import output_name, topology_name

    if key == "topology":
        return topology_name(str(value))
    if key == "output":
        return output_name(value)
    if key in FIELDS:
        if value is None:
            return "default"
        spec = FIELDS[key]
        if spec.integer:
            return str(value)
        if isinstance(value, float) and math.isinf(value):
            return "open"
        return format_quantity(value, spec.unit)
    if isinstance(value, dict):
        return ", ".join(f"{k} = {_setting(v, k)}" for k, v in value.items()) or "defaults"
    return str(value)


def _setting(v: Any, key: str = "") -> str:
    if isinstance(v, float) and "tempco" in key:
        return format_quantity(v, "ppm/K")
    if isinstance(v, float) and "tolerance" in key:
        return "±" + format_percent(v)
    if isinstance(v, float):
        return format_quantity(v, digits=EDIT_DIGITS)
    if isinstance(v, dict):
        return "{" + ", ".join(f"{k} = {_setting(x, key)}" for k, x in v.items()) + "}"
    return str(v)


def _design_section(data: ReviewData) -> list[Block]:
    cands = data.doc.candidates
    keys = [k for k in cands[0].to_dict() if k not in {"name", "parts"}]
    rows = []
    for key in keys:
        label = FIELDS[key].label if key in FIELDS else key.replace("_", " ").capitalize()
        rows.append([label, *[_input_text(key, d.to_dict().get(key)) for d in cands]])
    rows.append(["As-built part values",
                 *[f"{len(d.parts)} parts given" if d.parts else "none" for d in cands]])
    return [Heading("1. Design and assumptions", 1),
            Table(["Setting", *[d.label for d in cands]], rows, "l" + "l" * len(cands),
                  swatches=_swatches(data, 1)),
            Paragraph("Assumptions: the reference is an ideal source behind its output resistance; "
                      "each switch is a resistance (one value when its bit is 1, another when 0); "
                      "the output is loaded by the load resistance (and its capacitance for "
                      "settling); values are DC, at the stated temperature. Targets: "
                      + describe_targets(data.doc.targets) + ".")]


def _comparison_section(data: ReviewData) -> list[Block]:
    from .tables import comparison_rows

    notes: dict[str, int] = {}
    rows = [[r.label.strip() if not r.label.startswith(" ") else "   " + r.label.strip(),
             *[_cell(e, r.key, notes) for e in data.evs]] for r in comparison_rows(data.evs)]
    return [Heading("2. Comparison", 1),
            Table(["Figure", *[e.design.label for e in data.evs]], rows,
                  swatches=_swatches(data, 1)), *_note_lines(notes)]


def _note_lines(notes: dict[str, int]) -> list[Block]:
    """The reasons behind ``no meaning (n)`` cells, one line each."""
    from rungwise.core.figure_meaning import note_line

    return [Paragraph(note_line(reason, n), "small") for reason, n in notes.items()]


def _search_section(data: ReviewData) -> list[Block]:
    from rungwise.core.search_report import TABLE_HEAD

    s = data.search
    if s is None:
        return []
    out: list[Block] = [Heading("Design search", 2), *[Paragraph(q, "small") for q in s.question],
                        Paragraph(s.answer)]
    if s.rows:
        out.append(Table(list(TABLE_HEAD), s.rows, "lrlrrrrr"))
    out += [Paragraph(w, "small", bullet=True) for w in s.why_lost]
    out.append(Paragraph(f"Method: {s.method}. Prices: {s.prices}.", "small"))
    return out


def schematic_code(ev: Evaluation) -> int:
    """The code whose switch states the report's schematic shows: mid-scale plus one LSB (the
    MSB and the LSB driven, so both switch positions appear)."""
    n = ev.design.bits
    return (1 << (n - 1)) | 1 if n > 1 else 1


def _schematic_section(data: ReviewData) -> list[Block]:
    from rungwise.core.schematic import schematic

    out: list[Block] = [Heading("3. Schematics", 1),
                        Paragraph("Each candidate as built: designators as in the bill of "
                                  "materials, values after snapping and as-built changes, "
                                  "switches in the state of the code named under each drawing.",
                                  "small", keep_with_next=True)]
    for i, ev in enumerate(data.evs):
        sch = schematic(ev.design, schematic_code(ev))
        x0, y0, x1, y1 = sch.bounds()
        aspect = min(0.9, max(0.3, (y1 - y0 + 2.2) / (x1 - x0 + 2.9)))
        out.append(Heading(ev.design.label, 3))
        out.append(Figure("schematic", sch, aspect, caption=sch.caption, accent=data.colours[i],
                          shrink=0.7))
    return out


def _plots_section(data: ReviewData) -> list[Block]:
    out: list[Block] = [Heading("4. Plots", 1)]
    for spec in data.plots:
        out.append(Figure("plot", spec, 0.52, colours=tuple(data.colours)))
    return out





def _stats_section(data: ReviewData) -> list[Block]:
    out: list[Block] = [Heading("5. Statistics and yield", 1)]
    if not any(s is not None for s in data.stats):
        out.append(Paragraph("Statistics were not computed for this report."))
    target = data.doc.targets.min_yield
    for i, (ev, s) in enumerate(zip(data.evs, data.stats, strict=True)):
        if s is None:
            continue
        out.append(Heading(ev.design.label, 3))
        out.append(Paragraph(f"{s.model.describe()}; {s.done:,} boards, seed {s.seed}, "
                             f"{s.engine} engine.", "small", keep_with_next=True))
        rows = []
        for key, y in s.yields().items():
            d = _decision(y.passed, y.trials, target)
            rows.append([figure(key).label, f"{y.passed:,} of {y.trials:,}",
                         d.yield_text()])
        out.append(Table(["Yield", "Boards passing", "Yield (one-sided 95 % bounds)"], rows,
                         "lrr", row_swatches={k: data.colours[i] for k in range(len(rows))}))
        pct = s.percentiles
        head = ["Figure", *[f"{p:g} % of boards" for p in next(iter(pct.values()))]]
        rows = [[_label(k), *[format_quantity(v, STAT_UNITS.get(k, "")) for v in d.values()]]
                for k, d in pct.items()]
        out.append(Table(head, rows))
    out += [Paragraph(n, "small") for n in data.notes]
    return out


def _parts_section(data: ReviewData) -> list[Block]:
    out: list[Block] = [Heading("6. Parts and ratings", 1)]
    for ev in data.evs:
        out.append(Heading(ev.design.label, 3))
        rows = [[p["id"], p["role"], format_quantity(p["ohms"], "Ω"),
                 format_quantity(p.get("power_max", math.nan), "W"),
                 str(p.get("power_code", ""))] for p in ev.parts[:MAX_PART_ROWS]]
        out.append(Table(["Part", "Role", "Value", "Worst power", "At code"], rows, "llrrr"))
        if len(ev.parts) > MAX_PART_ROWS:
            out.append(Paragraph(f"… and {len(ev.parts) - MAX_PART_ROWS:,} more parts (all are "
                                 "in the table and per-code exports).", "small"))
        lines, problem = bom_lines(ev)
        out.append(Paragraph(f"Bill of materials of {ev.design.label}: the rating to buy is the "
                             "worst-case power of one resistor divided by the derating; a switch "
                             "line gives the current it must source or sink.", "small",
                             keep_with_next=True))
        if problem:
            out.append(Paragraph(problem[0].upper() + problem[1:] + "."))
        out.append(Table(["Designators", "Kind", "Value", "Tolerance", "Rating needed",
                          "Switch current", "Qty", "Flag"], [_bom_row(ln) for ln in lines],
                         "llrrrrrl"))
    return out


def _bom_row(ln) -> list[str]:
    nan = math.isnan
    power = "" if ln.kind == "switch" or nan(ln.power_needed) else format_quantity(ln.power_needed,
                                                                               "W")
    current = (format_quantity(ln.power_needed, "A") if ln.kind == "switch"
               and not nan(ln.power_needed) else "")
    return [ln.designators, ln.kind, "" if nan(ln.ohms) else format_quantity(ln.ohms, "Ω"),
            "" if nan(ln.tolerance) else f"±{format_percent(ln.tolerance)}", power, current,
            str(ln.quantity), ln.note if ln.flagged else ""]


METHOD_NOTES: tuple[str, ...] = (
    "Output voltage, output resistance and reference current: the network solved exactly at every "
    "code by nodal analysis (switch and reference resistances and the load included); output "
    "resistance is the Thevenin resistance with the sources zeroed, the load excluded.",
    "INL and DNL in LSB, IEEE Std 1658 terms: endpoint line through the first and last codes, "
    "best-fit line by least squares (IEEE Std 1241); DNL against the endpoint LSB; monotonic when "
    "no step is negative.",
    "Power: worst case over all codes of V²/R for each resistor, from the same solution.",
    "Thermal noise: √(4kT·Rout) at the worst code, k the Boltzmann constant (SI 2019), integrated "
    "over the design's bandwidth through the output's RC pole (√(kT/C) for a wide band); settling "
    "to ½ LSB: τ·ln(2·(2^N − 1)) with τ = worst-code Rout × output capacitance (no figure without "
    "one).",
    "Glitch and settling of each transition c − 1 → c: the switched RC network solved exactly "
    "between switching events (every node's capacitance, switch edges that ramp the driven end "
    "between the rails, on-resistance changing at mid-edge, ideal amplifiers). Net glitch impulse "
    "= ∫(v − v_sync) dt against the response of every switch moving at t = 0 (IEEE Std 1658 "
    "measures glitch impulse against the settled levels instead); peak = max |v − v_sync|; "
    "settling = the last time |v − v(∞)| exceeds ½ LSB, from the code change.",
    "Test sine: codes round(c_mid + a·c_mid·sin(2π·J·n/S)) through the static transfer, coherent "
    "sampling, rectangular-window DFT, DC excluded, harmonics 2 … 10 folded (IEEE Std 1241 "
    "sine-wave test; no noise added, so SINAD holds quantisation and static nonlinearity only); "
    "ENOB = (SINAD − 1.76 dB)/6.02 dB.",
    "Statistics: Monte Carlo over random part values drawn by a seeded numpy Generator (the seed is "
    "printed on every page so any result can be reproduced); yields with one-sided 95 % "
    "Clopper–Pearson bounds — with no failing board only the lower bound is known.",
    "Loosest grade that passes: the same boards (same seed) at each standard tolerance grade; the "
    "largest grade whose yield of all targets reaches the target yield.",
    "Schematics and part names: drawn from the solved network itself; designators follow the bill "
    "of materials (one per physical resistor).",
)
"""How each kind of figure is obtained, printed in the report."""


def report_blocks(data: ReviewData) -> list[Block]:
    """The whole report as blocks, page 1 first."""
    out = _page_one(data)
    out += _design_section(data)
    out += _comparison_section(data)
    out += _search_section(data)
    out += _schematic_section(data)
    out += _plots_section(data)
    out += _stats_section(data)
    out += _parts_section(data)
    out += [Heading("7. Cautions", 1)]
    out += [Paragraph(c, bullet=True) for c in cautions(data.evs)]
    out += [Heading("8. Method and sources", 1)]
    out += [Paragraph(m, bullet=True) for m in METHOD_NOTES]
    out += [Heading("9. Recommendation", 1), Paragraph(data.recommendation.text, "verdict")]
    return out


def page_footer(data: ReviewData) -> str:
    """The line every page carries (the page number is added beside it)."""
    name = data.source or "unsaved comparison"
    return (f"{name} · Rungwise {data.version} · seed {data.doc.analysis.seed} · design "
            f"checksum {data.checksum}")


def plots_for(data: ReviewData) -> Sequence[PlotSpec]:
    """Every plot the report draws (page 1's INL plot is one of them)."""
    return data.plots
