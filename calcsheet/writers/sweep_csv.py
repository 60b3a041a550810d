"""A sweep's table as CSV: the header row and the rows as the sheet laid them out, nothing added.

Comma-separated, fields quoted only where they hold a comma or a quote, lines ended by a line feed, UTF-8:
the form spreadsheets open directly.
"""

from __future__ import annotations

import csv
import io


def table_csv(table) -> str:
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(table.header)
    writer.writerows(table.rows)
    return out.getvalue()
