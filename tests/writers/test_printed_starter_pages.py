"""Every page of every `calcsheet new` starter, in both styles, read by poppler: drawn without a warning,
and broken where a checker expects (see tests/writers/printed.py)."""

from __future__ import annotations

import pytest

from tests.writers.printed import POPPLER, STARTERS, STYLES, break_problems, poppler_warnings, printed

pytestmark = pytest.mark.skipif(not POPPLER, reason="poppler's pdftotext and pdftocairo are needed")
CASES = [(kind, style) for kind in STARTERS for style in STYLES]


@pytest.mark.parametrize(("kind", "style"), CASES)
def test_poppler_draws_every_page_without_a_warning(kind, style, tmp_path):
    assert poppler_warnings(printed(kind, style).pdf, tmp_path) == []


@pytest.mark.parametrize(("kind", "style"), CASES)
def test_pages_break_where_a_checker_expects(kind, style):
    assert break_problems(printed(kind, style)) == []
