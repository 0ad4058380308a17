"""The tool's one CSV writer: RFC 4180 records, and no cell that a spreadsheet program would run as a formula.

Every CSV the tool writes (the review's findings, history exports) goes through `write_csv_rows`:

- UTF-8, records ended by CRLF, cells double-quoted when they hold a comma, a quote or a line break (RFC 4180);
  `bom=True` starts the file with a UTF-8 byte order mark, for spreadsheet programs that need it to see UTF-8.
- A text cell that starts with =, +, -, @, a tab or a carriage return gets a leading apostrophe, so that a
  spreadsheet shows it as text instead of evaluating it (common practice, no source; the OWASP guidance on
  CSV injection describes it). Numbers stay numbers: only text cells are changed; None is an empty cell.
"""

from __future__ import annotations

import csv
import math
from collections.abc import Iterable, Sequence
from pathlib import Path

FORMULA_STARTS: tuple[str, ...] = ("=", "+", "-", "@", "\t", "\r")


def safe_cell(value: object) -> str:
    """The text of one cell: numbers as written, None (or a missing float) empty, formula-like text defused."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    if isinstance(value, (bool, int, float)):
        return str(value)
    text = str(value)
    return "'" + text if text.startswith(FORMULA_STARTS) else text


def write_csv_rows(path: str | Path, header: Sequence[str], rows: Iterable[Sequence[object]],
                   bom: bool = False) -> int:
    """Write HEADER and ROWS to PATH as described in the module docstring; return the number of rows."""
    count = 0
    with open(path, "w", encoding="utf-8-sig" if bom else "utf-8", newline="") as out:
        writer = csv.writer(out, lineterminator="\r\n")
        writer.writerow([safe_cell(h) for h in header])
        for row in rows:
            writer.writerow([safe_cell(v) for v in row])
            count += 1
    return count
