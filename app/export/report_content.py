"""The design-review report's content, without Qt: figures gathered once, rendered as HTML.

:func:`gather` evaluates every candidate (and runs the Monte Carlo statistics with the file's trial
count and seed unless asked not to); :func:`report_html` turns that into one HTML document whose
plots are ``<img src="plot:NAME">`` references that ``report_pdf`` fills with images. Every number
in the text comes from the gathered results; the recommendation from ``core.review.recommend``.
"""

from __future__ import annotations

import datetime as _dt
import html
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from rungwise.core import FIELDS, Evaluation, evaluate
from rungwise.core.designfile import DesignFile
from rungwise.core.review import Recommendation, bom_lines, cautions, describe_targets, recommend
from rungwise.core.units import format_value

from ..plots.specs import PlotSpec, comparison_plots, spread_plot
from .tables import table_html_fragment

MAX_PART_ROWS = 40
"""Parts listed per candidate in the report; the rest are counted (all are in the exports)."""


@dataclass
class ReviewData:
    """Everything the report shows, computed once.

    Attributes
    ----------
    doc : DesignFile
    evs : list[Evaluation]
    stats : list
        ``MonteCarloResult`` per candidate, or ``None`` where statistics were not run.
    recommendation : Recommendation
    title : str
    notes : list[str]
        Why statistics were left out for a candidate, if they were.
    """

    doc: DesignFile
    evs: list[Evaluation]
    stats: list[Any]
    recommendation: Recommendation
    title: str = "Design review"
    notes: list[str] = field(default_factory=list)

    @property
    def plots(self) -> list[PlotSpec]:
        """The plots the report embeds (the INL spread only when statistics were run)."""
        spread = spread_plot(self.evs, self.stats)
        return comparison_plots(self.evs) + ([spread] if spread is not None else [])


def gather(doc: DesignFile, title: str = "Design review", with_stats: bool = True,
           cancel: Any = None, progress: Callable[[str], None] | None = None) -> ReviewData:
    """Evaluate the candidates, run statistics (file's trials and seed), derive the recommendation.

    ``cancel`` (a ``threading.Event``) is checked between Monte Carlo batches; once it is set the
    remaining statistics are skipped (a caller that cancels discards the result). ``progress``,
    when given, receives a line of text about ten times per candidate's statistics (boards done).
    """
    evs = [evaluate(d) for d in doc.candidates]
    stats: list[Any] = [None] * len(evs)
    notes: list[str] = []
    if with_stats:
        from rungwise.core.errors import DesignError
        from rungwise.core.montecarlo import iter_monte_carlo

        for i, d in enumerate(doc.candidates):
            if cancel is not None and cancel.is_set():
                break
            try:
                for partial in iter_monte_carlo(d, doc.analysis.trials, doc.analysis.seed,
                                                cancel=cancel, targets=doc.targets,
                                                reports=10 if progress else 1):
                    stats[i] = partial
                    if progress is not None:
                        progress(f"statistics of {d.label} ({i + 1} of {len(evs)}): "
                                 f"{partial.done:,} of {doc.analysis.trials:,} boards")
            except DesignError as exc:
                notes.append(f"{d.label}: statistics not run ({exc})")
    yields = [float(s.yield_all) if s is not None else None for s in stats]
    rec = recommend(evs, doc.targets, yields if any(y is not None for y in yields) else None)
    return ReviewData(doc, evs, stats, rec, title, notes)


# --- HTML pieces -----------------------------------------------------------------------------
def _esc(x: Any) -> str:
    return html.escape(str(x))


def _table(head: Sequence[str], rows: Sequence[Sequence[Any]], right_from: int = 1) -> str:
    out = ['<table border="1" cellspacing="0" cellpadding="3">',
           "<tr>" + "".join(f"<th>{_esc(h)}</th>" for h in head) + "</tr>"]
    for r in rows:
        out.append("<tr>" + "".join(
            f'<td{" align=right" if i >= right_from else ""}>{_esc(c)}</td>' for i, c in enumerate(r))
            + "</tr>")
    out.append("</table>")
    return "\n".join(out)


def _input_text(key: str, value: Any) -> str:
    if key in FIELDS:
        if value is None:
            return "default"
        unit = FIELDS[key].unit
        if isinstance(value, float) and math.isinf(value):
            return "open"
        return format_value(value, unit if unit not in {"bits"} else "") if not FIELDS[key].integer \
            else str(value)
    if isinstance(value, Mapping):
        return ", ".join(f"{k} = {v}" for k, v in value.items()) or "defaults"
    return str(value)


def _design_section(data: ReviewData) -> str:
    cands = data.doc.candidates
    keys = [k for k in cands[0].to_dict() if k not in {"name", "parts"}]
    rows = []
    for key in keys:
        label = FIELDS[key].label if key in FIELDS else key.replace("_", " ").capitalize()
        rows.append([f"{label} ({key})", *[_input_text(key, d.to_dict()[key]) for d in cands]])
    overrides = [", ".join(f"{k} = {format_value(v, 'Ω')}" for k, v in d.parts.items()) or "none"
                 for d in cands]
    rows.append(["As-built part values (parts)", *overrides])
    return ("<h2>1. Design and assumptions</h2>\n"
            + _table(["Setting", *[d.label for d in cands]], rows)
            + "\n<p>Assumptions: the reference is an ideal source behind its output resistance "
            "(ref_r); each switch is a resistance (ron_high when its bit is 1, ron_low when 0); the "
            "output is loaded by load_r (and load_c for settling); values are DC, at the stated "
            "temperature. Targets: " + _esc(describe_targets(data.doc.targets)) + ".</p>")


def _stats_section(data: ReviewData) -> str:
    out = ["<h2>4. Statistics and yield</h2>"]
    if not any(s is not None for s in data.stats):
        out.append("<p>Statistics were not computed for this report.</p>")
    for ev, s in zip(data.evs, data.stats, strict=True):
        if s is None:
            continue
        out.append(f"<h3>{_esc(ev.design.label)}</h3><p>{_esc(s.model.describe())}; {s.done} "
                   f"trials, seed {s.seed}, {_esc(s.engine)} engine.</p>")
        rows = [[label, y.text()] for label, y in
                zip(("Monotonic", "|DNL| within limit", "|INL| within limit", "All together"),
                    s.yields().values(), strict=True)]
        out.append(_table(["Yield", "Value ± standard error"], rows))
        pct = s.percentiles
        head = ["Figure", *[f"{p:g} %" for p in next(iter(pct.values()))]]
        out.append(_table(head, [[k, *[f"{v:.4g}" for v in d.values()]] for k, d in pct.items()]))
    out += [f"<p>{_esc(n)}</p>" for n in data.notes]
    return "\n".join(out)


def _parts_section(data: ReviewData) -> str:
    out = ["<h2>5. Parts and ratings</h2>"]
    for ev in data.evs:
        rows = [[p["id"], p["role"], format_value(p["ohms"], "Ω"),
                 format_value(p.get("power_max", math.nan), "W"), p.get("power_code", "")]
                for p in ev.parts[:MAX_PART_ROWS]]
        out.append(f"<h3>{_esc(ev.design.label)}</h3>")
        out.append(_table(["Part", "Role", "Value", "Worst power", "at code"], rows, right_from=2))
        if len(ev.parts) > MAX_PART_ROWS:
            out.append(f"<p>… and {len(ev.parts) - MAX_PART_ROWS} more parts (all are in the "
                       "table and per-code exports).</p>")
        out.append("<p>Bill of materials (power needed = worst-case power per unit ÷ derating; "
                   "for switches, the current to source or sink):</p>")
        lines, problem = bom_lines(ev)
        if problem:
            out.append(f"<p>{_esc(problem[0].upper() + problem[1:])}.</p>")
        out.append(_table(["Designators", "Kind", "Value", "Series", "Tolerance", "Power needed",
                           "Qty", "Flag"], [_bom_row(ln) for ln in lines], right_from=2))
    return "\n".join(out)


def _bom_row(ln) -> list[str]:
    nan = math.isnan
    need = "" if nan(ln.power_needed) else format_value(ln.power_needed,
                                                        "A" if ln.kind == "switch" else "W")
    return [ln.designators, ln.kind, "" if nan(ln.ohms) else format_value(ln.ohms, "Ω"), ln.series,
            "" if nan(ln.tolerance) else f"±{ln.tolerance * 100:g} %", need, str(ln.quantity),
            ln.note if ln.flagged else ""]


METHOD_NOTES: tuple[str, ...] = (
    "Output voltage, output resistance and reference current: the network solved exactly at every "
    "code by nodal analysis (switch and reference resistances and the load included); output "
    "resistance is the Thevenin resistance with the sources zeroed, the load excluded.",
    "INL and DNL in LSB, IEEE Std 1658 terms: endpoint line through the first and last codes, "
    "best-fit line by least squares (IEEE Std 1241); DNL against the endpoint LSB; monotonic when "
    "no step is negative.",
    "Power: worst case over all codes of V²/R for each resistor, from the same solution.",
    "Thermal noise: √(4kT·Rout) at the worst code, k = 1.380649e-23 J/K (SI 2019), integrated over "
    "the design's bandwidth; settling to ½ LSB: τ·ln(2·(2^N − 1)) with τ = worst-code Rout × load_c.",
    "Statistics: Monte Carlo over random part values drawn by a seeded numpy Generator (the seed is "
    "printed so any result can be reproduced); yields with standard error √(p(1 − p)/n).",
    "Part counts: counted from the built network (resistors, switches, amplifiers).",
)
"""How each kind of figure is obtained, printed in the report."""


PLOT_WIDTH_PT = 460
"""Width of a plot in the report, points (two plots of 3:2 fit one A4 page with margins)."""


def _plot_blocks(plots: Sequence[PlotSpec]) -> list[str]:
    """Two plots per page, each page started explicitly so no plot is cut by a page break."""
    out = []
    for i, p in enumerate(plots):
        brk = ' style="page-break-before: always"' if i and i % 2 == 0 else ""
        out.append(f'<p{brk}><img src="plot:{p.name}" width="{PLOT_WIDTH_PT}"></p>')
    return out


def report_html(data: ReviewData) -> str:
    """The whole report as HTML (plots as ``plot:NAME`` image references)."""
    evs = data.evs
    names = ", ".join(e.design.label for e in evs)
    stamp = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
    parts = [
        f"<h1>{_esc(data.title)}</h1>",
        f"<p>Candidates: {_esc(names)}. Made by Rungwise on {stamp}.</p>",
        f"<p><b>{_esc(data.recommendation.text)}</b></p>",
        _design_section(data),
        "<h2>2. Comparison</h2>",
        table_html_fragment(evs),
        '<h2 style="page-break-before: always">3. Plots</h2>',
        *_plot_blocks(data.plots),
        '<div style="page-break-before: always"></div>',
        _stats_section(data),
        _parts_section(data),
        "<h2>6. Cautions</h2>",
        "<ul>" + "".join(f"<li>{_esc(c)}</li>" for c in cautions(evs)) + "</ul>",
        "<h2>7. Method and sources</h2>",
        "<ul>" + "".join(f"<li>{_esc(m)}</li>" for m in METHOD_NOTES) + "</ul>",
        "<h2>8. Recommendation</h2>",
        f"<p>{_esc(data.recommendation.text)}</p>",
        _table(["Candidate", "Parts", "Max |INL| (LSB)", "Max |DNL| (LSB)", "Monotonic", "Misses"],
               [[v.label, v.parts, f"{v.inl:.3g}", f"{v.dnl:.3g}", "yes" if v.monotonic else "no",
                 "; ".join(v.failures) or "none"] for v in data.recommendation.verdicts]),
    ]
    return "<html><body>\n" + "\n".join(parts) + "\n</body></html>\n"
