"""The printed critical-value tables hold exactly the numbers of trials.stats."""

from __future__ import annotations

import io
import re

import pytest
from pypdf import PdfReader

from trials.methods import FORCED_CHOICE
from trials.printing import critical_table_pdf
from trials.stats.discrimination import critical_table


@pytest.mark.slow
@pytest.mark.parametrize("method", FORCED_CHOICE)
def test_every_row_of_the_printed_table_equals_the_computed_one(method):
    table = critical_table(method=method)  # n = 5..200, alpha .20 .10 .05 .01 .001
    result = critical_table_pdf(table)
    text = "\n".join(p.extract_text() for p in PdfReader(io.BytesIO(result.data)).pages)
    printed = {}
    for page in text.split("alpha 0.001")[1:]:  # the body of each page, row after row
        cells = page.split()
        while len(cells) >= 6 and re.fullmatch(r"\d+", cells[0]):
            printed[int(cells[0])] = [None if v == "-" else int(v) for v in cells[1:6]]
            cells = cells[6:]
    assert sorted(printed) == list(table.ns)
    for n, row in zip(table.ns, table.critical):
        assert printed[n] == list(row), n
    assert result.pages >= 2


def test_the_triangle_table_prints_the_iso_4120_row_for_24_assessors():
    # ISO 4120 / the FAO handbook's triangle table: n = 24 needs 13 at alpha 0.05 (the
    # same row is checked against binomtest in test_discrimination.py).
    table = critical_table([24], [0.05], method="triangle")
    text = PdfReader(io.BytesIO(critical_table_pdf(table).data)).pages[0].extract_text()
    assert text.split("alpha 0.05")[1].split()[:2] == ["24", "13"]
