"""Every page of every demo, in both styles, read by poppler: drawn without a warning, and broken where a
checker expects (see tests/writers/printed.py)."""

from __future__ import annotations

import pytest

from tests.writers.printed import DEMOS, POPPLER, STYLES, break_problems, poppler_warnings, printed, split_pairs

pytestmark = pytest.mark.skipif(not POPPLER, reason="poppler's pdftotext and pdftocairo are needed")
CASES = [(demo, style) for demo in DEMOS for style in STYLES]


@pytest.mark.parametrize(("demo", "style"), CASES)
def test_poppler_draws_every_page_without_a_warning(demo, style, tmp_path):
    # A warning such as "matrix not invertible" came with debris drawn on the page (a zero-width glyph).
    assert poppler_warnings(printed(demo, style).pdf, tmp_path) == []


@pytest.mark.parametrize(("demo", "style"), CASES)
def test_pages_break_where_a_checker_expects(demo, style):
    assert break_problems(printed(demo, style)) == []


@pytest.mark.parametrize(("demo", "style"), CASES)
def test_no_number_is_parted_from_its_unit(demo, style):
    assert split_pairs(printed(demo, style)) == []
