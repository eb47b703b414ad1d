"""Page breaks of the report (Qt-free rules): whole rows, repeated headers, no lone rows."""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from rungwise.app.export.report_blocks import MIN_ROWS, Measured, paginate

PAGE = 100.0

_block = st.one_of(
    st.builds(Measured, height=st.floats(1, 40), keep_with_next=st.booleans()),
    st.builds(lambda head, rows: Measured(head=head, rows=rows), st.floats(2, 8),
              st.lists(st.floats(2, 12), min_size=1, max_size=30)),
    st.just(Measured(page_break=True)),
)


@settings(max_examples=300, deadline=None)
@given(st.lists(_block, min_size=1, max_size=25))
def test_pages_keep_rows_whole_and_never_leave_a_lone_row(blocks):
    pages = paginate(blocks, PAGE)
    placed_rows: dict[int, list[int]] = {}
    for page in pages:
        assert page or len(pages) == 1  # no empty page (but for a report of nothing)
        bottom = 0.0
        for k, p in enumerate(page):
            m = blocks[p.block]
            assert p.y >= bottom - 1e-9  # in order, no overlap
            if m.rows is None:
                bottom = p.y + m.height
                if m.keep_with_next and k == len(page) - 1 and p.block + 1 < len(blocks):
                    nxt = blocks[p.block + 1]
                    # a heading ends a page only when what follows could not have fitted anyway
                    assert nxt.page_break or nxt.keep_with_next or p.y + m.height + (
                        nxt.height if nxt.rows is None else nxt.head + sum(nxt.rows[:MIN_ROWS])
                    ) > PAGE or p.y == 0
                continue
            n = p.stop - p.start
            assert n >= 1
            total = len(m.rows)
            if total >= 2 * MIN_ROWS and m.head + MIN_ROWS * max(m.rows) <= PAGE:
                assert n >= MIN_ROWS  # no lone row on either side of a break
            assert p.continued == (p.start > 0)  # the header is repeated, marked continued
            placed_rows.setdefault(p.block, []).extend(range(p.start, p.stop))
            bottom = p.y + m.head + sum(m.rows[p.start:p.stop])
        if len(page) > 1:
            assert bottom <= PAGE + 1e-9  # nothing but a lone oversize block overflows
    for i, m in enumerate(blocks):
        if m.rows is not None:
            assert placed_rows[i] == list(range(len(m.rows)))  # every row once, in order
        elif not m.page_break:
            assert sum(p.block == i for page in pages for p in page) == 1


def test_a_table_that_would_leave_one_row_moves_a_second_one_over():
    blocks = [Measured(height=60), Measured(head=5, rows=[10.0] * 4)]
    pages = paginate(blocks, PAGE)
    # 35 units left fit 3 rows; the fourth alone would be a lone row, so two go over
    assert [(p.start, p.stop) for p in pages[0][1:]] == [(0, 2)]
    assert [(p.start, p.stop, p.continued) for p in pages[1]] == [(2, 4, True)]


def test_a_heading_goes_with_its_table():
    blocks = [Measured(height=80), Measured(height=8, keep_with_next=True),
              Measured(head=5, rows=[10.0] * 3)]
    pages = paginate(blocks, PAGE)
    assert [p.block for p in pages[1]] == [1, 2]


def test_a_chain_of_kept_blocks_moves_with_a_short_table():
    # heading → introduction → a three-row table, which cannot be cut without a lone row
    blocks = [Measured(height=70), Measured(height=6, keep_with_next=True),
              Measured(height=6, keep_with_next=True), Measured(head=5, rows=[5.0] * 3)]
    pages = paginate(blocks, PAGE)
    assert [p.block for p in pages[0]] == [0]
    assert [p.block for p in pages[1]] == [1, 2, 3]


def test_a_shrinkable_figure_finishes_the_page():
    blocks = [Measured(height=70), Measured(height=40, least=24), Measured(height=40, least=35)]
    pages = paginate(blocks, PAGE)
    assert [(p.block, p.height) for p in pages[0]] == [(0, 0.0), (1, 30.0)]  # shrunk from 40
    assert [p.block for p in pages[1]] == [2]  # room was 0: moves on whole
