"""The report as a list of blocks, and how they are cut into pages (no Qt).

``report_content`` says *what* the report holds as :class:`Heading`, :class:`Paragraph`,
:class:`Table`, :class:`Figure` and :class:`PageBreak` blocks; ``report_pdf`` measures each block
on the page and draws it. :func:`paginate` decides the page breaks from the measured heights
alone, so its rules are tested without Qt:

* a table is cut only between rows, its header repeated on the next page (marked continued);
  a page never ends on a header or a table's first row alone, and a continued part never holds a
  single row;
* a heading stays with the start of what follows it;
* figures and paragraphs are never cut.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

MIN_ROWS = 2
"""Fewest table rows on either side of a page break."""


@dataclass
class Heading:
    text: str
    level: int = 1


@dataclass
class Paragraph:
    """A paragraph of plain text; ``style`` is ``"body"``, ``"verdict"`` (bold, larger) or
    ``"small"``; ``bullet`` draws it as a list item; ``keep_with_next`` keeps it on the page of
    what follows (a table's introduction)."""

    text: str
    style: str = "body"
    bullet: bool = False
    keep_with_next: bool = False


@dataclass
class Table:
    """A table of text cells.

    ``align`` has one letter per column, ``l`` or ``r`` (numbers are right-aligned);
    ``swatches`` maps a column to the colour drawn before its header (a candidate's colour).
    """

    head: list[str]
    rows: list[list[str]]
    align: str = ""
    swatches: dict[int, str] = field(default_factory=dict)
    row_swatches: dict[int, str] = field(default_factory=dict)

    def __post_init__(self) -> None:
        n = len(self.head)
        if any(len(r) != n for r in self.rows):
            raise ValueError("every table row needs one cell per header")
        self.align = (self.align or "l" + "r" * (n - 1)).ljust(n, "l")


@dataclass
class Figure:
    """A drawing: ``kind`` ``"plot"`` (a ``PlotSpec``) or ``"schematic"`` (a ``Schematic``);
    ``aspect`` is height / width; ``colours`` the candidates' colours in order; ``shrink`` > 0
    lets it shrink to that fraction of its height to stay on the page."""

    kind: str
    item: Any
    aspect: float
    caption: str = ""
    colours: tuple[str, ...] = ()
    accent: str = ""
    shrink: float = 0.0


@dataclass
class PageBreak:
    pass


Block = Heading | Paragraph | Table | Figure | PageBreak


@dataclass
class Measured:
    """A block's heights on the page: ``height`` for an uncut block; a table's ``head`` and
    ``rows`` heights (every height includes the space after it). ``least`` (> 0) lets a figure
    shrink down to that height to finish a page instead of moving to the next one."""

    height: float = 0.0
    head: float = 0.0
    rows: list[float] | None = None
    keep_with_next: bool = False
    page_break: bool = False
    least: float = 0.0


@dataclass
class Placed:
    """One block (or a run of a table's rows) on a page: top ``y``, table rows ``start:stop``,
    ``height`` given to a block that shrank to fit (0: its measured height)."""

    block: int
    y: float
    start: int = 0
    stop: int = 0
    continued: bool = False
    height: float = 0.0


def _first_piece(m: Measured) -> float:
    """The least of a block that must come right after a heading: a table's header and first
    rows (the whole table when it is too short to be cut without a lone row)."""
    if m.rows is None:
        return m.least or m.height
    return m.head + sum(m.rows if len(m.rows) < 2 * MIN_ROWS else m.rows[:MIN_ROWS])


def _kept_height(measured: Sequence[Measured], i: int) -> float:
    """Height from block ``i`` through every block it is kept with, to the first piece of the
    first one that is not kept with the next."""
    need = 0.0
    while i < len(measured):
        m = measured[i]
        if m.page_break:
            break
        if not m.keep_with_next or i + 1 == len(measured):
            return need + _first_piece(m)
        need += m.height
        i += 1
    return need


class _Pager:
    def __init__(self, page_height: float) -> None:
        self.height = page_height
        self.pages: list[list[Placed]] = [[]]
        self.y = 0.0

    def new_page(self) -> None:
        if self.pages[-1]:
            self.pages.append([])
        self.y = 0.0

    def place(self, i: int, m: Measured, measured: Sequence[Measured]) -> None:
        need = _kept_height(measured, i) if m.keep_with_next else m.height
        room = self.height - self.y
        if 0 < m.least <= room < need and self.pages[-1]:  # shrink to finish this page
            self.pages[-1].append(Placed(i, self.y, height=room))
            self.y += room
            return
        if need > room:
            self.new_page()
        self.pages[-1].append(Placed(i, self.y))
        self.y += m.height

    def table(self, i: int, m: Measured) -> None:
        rows = m.rows or []
        n, start, continued = len(rows), 0, False
        while True:
            left = n - start
            room = self.height - self.y - m.head
            fit, used = 0, 0.0
            while fit < left and used + rows[start + fit] <= room:
                used += rows[start + fit]
                fit += 1
            if fit >= left:  # the rest fits
                self.pages[-1].append(Placed(i, self.y, start, n, continued))
                self.y += m.head + sum(rows[start:])
                return
            if left - fit < MIN_ROWS:  # leave at least MIN_ROWS for the next page
                fit = max(0, left - MIN_ROWS)
            if fit < min(MIN_ROWS, left):  # too little room here: start on a new page
                if self.pages[-1]:
                    self.new_page()
                    continue
                fit = max(1, fit)  # a page too short for two rows: one row at a time
            self.pages[-1].append(Placed(i, self.y, start, start + fit, continued))
            start += fit
            continued = True
            self.new_page()


def paginate(measured: Sequence[Measured], page_height: float) -> list[list[Placed]]:
    """Pages of placed blocks for blocks of the measured heights (same units as ``page_height``).

    A block taller than a page goes on a page of its own (it overflows rather than vanishing).
    """
    pager = _Pager(page_height)
    for i, m in enumerate(measured):
        if m.page_break:
            pager.new_page()
        elif m.rows is None:
            pager.place(i, m, measured)
        else:
            pager.table(i, m)
    if not pager.pages[-1] and len(pager.pages) > 1:
        pager.pages.pop()
    return pager.pages
