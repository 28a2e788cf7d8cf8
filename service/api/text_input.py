"""Values from a ``text/csv`` or ``text/plain`` body, as spreadsheets write them.

Numbers may be separated by commas, semicolons, tabs, spaces or newlines. An empty
cell (two separators in a row, or an empty line) and the spreadsheet missing-value
markers in :data:`MISSING_TOKENS` are missing values: dropped and counted, or refused
with ``missing=reject``. An optional header line names the column. A table whose
header names several columns needs ``column`` (a name or a 1-based number). With
``decimal=","`` (locales that write 1,5) the comma is the decimal mark and only
semicolons, tabs, spaces and newlines separate.

Splitting is done by ``str`` methods on the whole body and conversion by numpy on
whole arrays; only the error path, which stops at the first fault, walks lines.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from .errors import Problem

# Written by spreadsheet programs for empty or failed cells, in the casings seen in
# practice (common practice; the list is part of the API documentation).
MISSING_TOKENS = (
    "", "NA", "na", "N/A", "n/a", "#N/A", "NaN", "nan", "NAN", "null", "NULL", "Null",
    "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#NULL!", "#SPILL!", "#CALC!", "#FIELD!",
    "#GETTING_DATA",
)
_STRINGS = np.dtypes.StringDType()
_MISSING = np.array(MISSING_TOKENS, dtype=_STRINGS)
_SPACES = re.compile(r"[ \u00a0]+")
_NUMBER_START = frozenset("0123456789+-.")


@dataclass(frozen=True)
class ParsedText:
    values: np.ndarray  # finite float64, missing removed
    missing: int
    total: int
    label: str | None


def _normalise(text: str) -> str:
    if text.startswith("\ufeff"):
        text = text[1:]
    text = text.replace("\r\n", "\n").replace("\r", "\n")
    return text[:-1] if text.endswith("\n") else text


def _cells(text: str, separators: str) -> list[str]:
    """Split on each separator character, newlines and runs of spaces, keeping the
    empty cells between explicit separators."""
    text = _SPACES.sub(" ", text)
    for sep in separators + "\n":
        text = text.replace(" " + sep, sep).replace(sep + " ", sep)
    text = text.strip(" ")
    for sep in separators:
        text = text.replace(sep, "\n")
    return text.replace(" ", "\n").split("\n")


def _unquote(cell: str) -> str:
    return cell.strip().strip('"')


def _looks_like_header(cells: list[str]) -> bool:
    names = [_unquote(c) for c in cells]
    return bool(names) and all(name not in MISSING_TOKENS and name[:1] not in _NUMBER_START for name in names)


def _fault(code: str, index: int, detail: str, where: dict) -> Problem:
    return Problem(code, detail, errors=[{"pointer": f"/values/{index}", "detail": detail, **where}])


def _convert(cells: list[str], *, decimal: str, missing: str, where) -> tuple[np.ndarray, int]:
    """Cells to finite floats; ``where(index)`` gives the line and column of a fault."""
    tokens = np.array(cells, dtype=_STRINGS)
    tokens = np.strings.strip(np.strings.strip(tokens), '"')
    absent = np.isin(tokens, _MISSING)
    n_missing = int(np.count_nonzero(absent))
    if n_missing and missing == "reject":
        i = int(np.argmax(absent))
        raise _fault("missing-values-rejected", i,
                     f"value {i} is missing ({str(tokens[i])!r}) and the request asked for missing=reject", where(i))
    present = np.flatnonzero(~absent)
    tokens = tokens[present]
    if decimal == ",":
        tokens = np.strings.replace(tokens, ",", ".")
    underscore = np.strings.find(tokens, "_") >= 0  # numpy reads 1_000 as 1000; no spreadsheet writes it
    try:
        if underscore.any():
            raise ValueError
        values = tokens.astype(np.float64)
    except ValueError:
        lo, hi = 0, tokens.size  # binary search for the first bad token, in whole-array steps
        while hi - lo > 1:
            mid = (lo + hi) // 2
            try:
                if underscore[lo:mid].any():
                    raise ValueError
                tokens[lo:mid].astype(np.float64)
                lo = mid
            except ValueError:
                hi = mid
        i = int(present[lo])
        raise _fault("invalid-value", i,
                     f"value {i} is {str(tokens[lo])!r:.40}, which is neither a number nor a missing-value marker", where(i)) from None
    bad = ~np.isfinite(values)
    if bad.any():
        j = int(np.argmax(bad))
        i = int(present[j])
        raise _fault("non-finite-value", i, f"value {i} is {str(tokens[j])!r}, which is not finite", where(i))
    return values, n_missing


def parse_text_values(
    text: str,
    *,
    decimal: str = ".",
    column: str | None = None,
    missing: str = "drop",
    max_values: int,
) -> ParsedText:
    """Parse one sample from a text body; see the module docstring for the rules."""
    text = _normalise(text)
    separators = ";\t" if decimal == "," else ",;\t"
    first_line, _, rest = text.partition("\n")
    # A header splits only on an explicit separator, so a name may hold spaces.
    header_sep = next((sep for sep in separators if sep in first_line), None)
    header = first_line.split(header_sep) if header_sep else [first_line]
    label = None
    header_lines = 0
    if text and _looks_like_header(header):
        names = [_unquote(c) for c in header]
        if len(names) > 1:
            return _table_column(rest, names, column, header_sep, decimal, missing, max_values)
        label, text, header_lines = names[0], rest, 1
    elif column is not None:
        raise Problem("invalid-request", "column= needs a header line naming the columns",
                      errors=[{"pointer": "/column", "detail": "the body has no header line"}])
    cells = _cells(text, separators) if text else []
    if len(cells) > max_values:
        raise Problem("too-large", f"the body holds {len(cells)} values; this service accepts at most {max_values} per sample")

    def where(index: int) -> dict:
        seen = 0
        for number, line in enumerate(text.split("\n"), start=1 + header_lines):
            count = len(_cells(line, separators))
            if index < seen + count:
                return {"line": number, "column": index - seen + 1}
            seen += count
        return {}

    if not cells:
        return ParsedText(np.empty(0), 0, 0, label)
    values, n_missing = _convert(cells, decimal=decimal, missing=missing, where=where)
    return ParsedText(values, n_missing, len(cells), label)


def _table_column(text, names, column, sep, decimal, missing, max_values) -> ParsedText:
    width = len(names)
    if column is None:
        raise Problem(
            "invalid-request",
            f"the body is a table with {width} columns ({', '.join(names)}); a sample is one column: "
            "choose it with column=<name or 1-based number>",
            errors=[{"pointer": "/column", "detail": "required for a table with several columns"}],
        )
    if column in names:
        k = names.index(column)
    elif column.isdigit() and 1 <= int(column) <= width:
        k = int(column) - 1
    else:
        raise Problem("invalid-request",
                      f"column {column!r} is neither a header name ({', '.join(names)}) nor a number from 1 to {width}",
                      errors=[{"pointer": "/column", "detail": "no such column"}])
    lines = np.strings.strip(np.array(text.split("\n") if text else [], dtype=_STRINGS))
    if lines.size > max_values:
        raise Problem("too-large", f"the table holds {lines.size} rows; this service accepts at most {max_values} values per sample")
    counts = np.strings.count(lines, sep) + 1
    blank = np.strings.str_len(lines) == 0
    ragged = (counts != width) & ~blank
    if ragged.any():
        row = int(np.argmax(ragged))
        detail = f"line {row + 2} has {int(counts[row])} cells; the header names {width}"
        raise Problem("invalid-value", detail, errors=[{"detail": detail, "line": row + 2}])
    lines = np.where(blank, sep * (width - 1), lines)
    cells = sep.join(lines.tolist()).split(sep) if lines.size else []
    chosen = np.array(cells, dtype=_STRINGS).reshape(-1, width)[:, k].tolist()
    if not chosen:
        return ParsedText(np.empty(0), 0, 0, names[k])
    values, n_missing = _convert(chosen, decimal=decimal, missing=missing,
                                 where=lambda i: {"line": i + 2, "column": k + 1})
    return ParsedText(values, n_missing, len(chosen), names[k])
