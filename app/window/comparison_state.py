"""What the window compares, without Qt: the candidates (design, name, colour) and which one is edited.

Every finished change goes through :meth:`ComparisonState.apply_edit` (one place, so undo can be added
there); listeners registered with :meth:`ComparisonState.subscribe` hear ``"candidates"`` and
``"selection"`` changes. :mod:`rungwise.app.window.comparison_model` wraps this in Qt signals.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from typing import Literal

from rungwise.core.design import Design
from rungwise.core.display_names import network_name
from rungwise.core.types import OUTPUTS_BY_TOPOLOGY, TOPOLOGIES

Change = Literal["candidates", "selection"]
"""What a listener is told about."""

MAX_CANDIDATES = 4
"""Most candidates compared at once."""

CANDIDATE_COLOURS: tuple[str, ...] = ("#2f8f9d", "#c9733a", "#8a62b5", "#6b8f2c", "#c0507a", "#4f6fc4")
"""Our candidate colours (sea teal, kiln orange, heather, moss, rosewood, cornflower): mid-lightness
hues that read on both light and dark backgrounds; the first four are handed out in order."""


@dataclass(frozen=True)
class Candidate:
    """One compared design with the colour it is drawn in (``#rrggbb``); its name is ``design.label``.

    ``given``: the name is the program's (the demo's, or made on Add), so it follows the network
    when the network changes; a name the person typed (or read from a file) stays.
    """

    design: Design
    colour: str
    given: bool = False

    @property
    def name(self) -> str:
        """The name shown in lists, legends and the table."""
        return self.design.label


def next_colour(used: Sequence[str]) -> str:
    """The first scheme colour not in ``used`` (cycling when all are taken)."""
    for c in CANDIDATE_COLOURS:
        if c not in used:
            return c
    return CANDIDATE_COLOURS[len(used) % len(CANDIDATE_COLOURS)]


def with_colours(designs: Sequence[Design], colours: Sequence[str] = (),
                 named_by_program: bool = False) -> list[Candidate]:
    """Candidates for ``designs``, using ``colours`` in order where given and valid; their names
    are the program's when ``named_by_program`` (the demo) or named after their network."""
    out: list[Candidate] = []
    for i, d in enumerate(designs):
        colour = colours[i] if i < len(colours) else ""
        ok = isinstance(colour, str) and len(colour) == 7 and colour.startswith("#")
        out.append(Candidate(d, colour if ok else next_colour([c.colour for c in out]),
                             named_by_program or d.named_after_network))
    return out


def unique_name(wanted: str, taken: Sequence[str]) -> str:
    """``wanted``, or ``wanted 2``, ``wanted 3`` … when the name is already used."""
    if wanted not in taken:
        return wanted
    i = 2
    while f"{wanted} {i}" in taken:
        i += 1
    return f"{wanted} {i}"


def follow_network(old: Candidate, design: Design, taken: Sequence[str]) -> Design:
    """``design`` (``old`` edited) with a name the program gave following a changed network:
    the network's own label, told apart from the ``taken`` names (``… 2``)."""
    moved = (design.topology, design.output) != (old.design.topology, old.design.output)
    if not (moved and old.given and design.name in (old.design.name, "")):
        return design
    auto = network_name(design.topology, design.output)
    wanted = unique_name(auto, taken)
    return design.replace(name="" if wanted == auto else wanted)


class ComparisonState:
    """The compared candidates (1 … :data:`MAX_CANDIDATES`) and the index of the one being edited."""

    def __init__(self, candidates: Sequence[Candidate]) -> None:
        if not candidates:
            raise ValueError("at least one candidate is needed")
        self._candidates: tuple[Candidate, ...] = tuple(candidates[:MAX_CANDIDATES])
        self._selected = 0
        self._listeners: list[Callable[[Change], None]] = []
        self.last_description = ""

    # --- reading ------------------------------------------------------------------------------
    @property
    def candidates(self) -> tuple[Candidate, ...]:
        """The candidates in display order."""
        return self._candidates

    @property
    def designs(self) -> list[Design]:
        """The candidates' designs in display order."""
        return [c.design for c in self._candidates]

    @property
    def selected(self) -> int:
        """Index of the candidate whose values are shown for editing."""
        return self._selected

    @property
    def current(self) -> Candidate:
        """The candidate being edited."""
        return self._candidates[self._selected]

    def subscribe(self, listener: Callable[[Change], None]) -> None:
        """Call ``listener(change)`` after every change."""
        self._listeners.append(listener)

    def _notify(self, change: Change) -> None:
        for listener in list(self._listeners):
            listener(change)

    # --- the one way candidates change --------------------------------------------------------
    def apply_edit(self, new_candidates: Sequence[Candidate], description: str,
                   selected: int | None = None) -> bool:
        """Replace the candidate list after a finished edit; returns False when nothing changed.

        ``description`` says what was done (for an undo list); ``selected`` moves the edited
        candidate (kept in range).
        """
        new = tuple(new_candidates)
        if not new or len(new) > MAX_CANDIDATES:
            raise ValueError(f"between 1 and {MAX_CANDIDATES} candidates are compared, got {len(new)}")
        sel = self._selected if selected is None else selected
        sel = min(max(sel, 0), len(new) - 1)
        changed = new != self._candidates
        moved = sel != self._selected
        self._candidates = new
        self._selected = sel
        if changed:
            self.last_description = description
            self._notify("candidates")
        if moved or (changed and selected is not None):
            self._notify("selection")
        return changed

    def select(self, index: int) -> None:
        """Choose which candidate is edited (not an edit of the comparison)."""
        index = min(max(index, 0), len(self._candidates) - 1)
        if index != self._selected:
            self._selected = index
            self._notify("selection")

    # --- common edits, all through apply_edit --------------------------------------------------
    def set_design(self, index: int, design: Design, description: str) -> bool:
        """Replace one candidate's design; a name the program gave follows a new network."""
        cands = list(self._candidates)
        taken = [c.name for i, c in enumerate(cands) if i != index]
        cands[index] = replace(cands[index], design=follow_network(cands[index], design, taken))
        return self.apply_edit(cands, description)

    def set_colour(self, index: int, colour: str) -> bool:
        """Give one candidate another colour."""
        cands = list(self._candidates)
        cands[index] = replace(cands[index], colour=colour)
        return self.apply_edit(cands, f"colour of {cands[index].name}")

    def rename(self, index: int, name: str) -> bool:
        """Rename one candidate (an empty name falls back to the topology)."""
        design = self._candidates[index].design.replace(name=name.strip())
        cands = list(self._candidates)
        cands[index] = replace(cands[index], design=design, given=not name.strip())
        return self.apply_edit(cands, f"rename to {design.label}")

    def can_add(self) -> bool:
        """Whether another candidate fits."""
        return len(self._candidates) < MAX_CANDIDATES

    def add(self, design: Design | None = None, given: bool = True) -> bool:
        """Add ``design`` (default: the edited candidate's values on a topology not yet compared),
        named uniquely; ``given``: the name is the program's (it follows the network)."""
        if not self.can_add():
            return False
        if design is None:
            design = self._fresh_design()
        taken = [c.name for c in self._candidates]
        wanted = unique_name(design.label, taken)
        design = design.replace(name="" if wanted == design.label and given and
                                design.named_after_network else wanted)
        cand = Candidate(design, next_colour([c.colour for c in self._candidates]), given)
        return self.apply_edit([*self._candidates, cand], f"add {design.label}",
                               selected=len(self._candidates))

    def duplicate(self, index: int) -> bool:
        """Add a copy of one candidate, to vary its values."""
        if not self.can_add():
            return False
        source = self._candidates[index]
        return self.add(source.design, given=source.given)

    def remove(self, index: int) -> bool:
        """Remove one candidate (the last one stays)."""
        if len(self._candidates) <= 1:
            return False
        cands = list(self._candidates)
        gone = cands.pop(index)
        sel = self._selected - 1 if index < self._selected else self._selected
        return self.apply_edit(cands, f"remove {gone.name}", selected=sel)

    def _fresh_design(self) -> Design:
        base = self.current.design
        used = {(c.design.topology, c.design.output) for c in self._candidates}
        for topo in TOPOLOGIES:
            for out in OUTPUTS_BY_TOPOLOGY[topo]:
                if (topo, out) not in used:
                    return base.replace(topology=topo, output=out, name="")
        return base.replace(name="")
