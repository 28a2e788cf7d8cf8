"""Values from a ``text/csv`` or ``text/plain`` body, as spreadsheets write them.

Numbers may be separated by commas, semicolons, tabs, spaces or newlines. An empty
cell (two separators in a row, or an empty line) and the spreadsheet missing-value
markers in :data:`MISSING_TOKENS` are missing values: dropped and counted, or refused
with ``missing=reject``; trailing blank lines are not cells. An optional header line
names the column. With ``decimal=","`` (locales that write 1,5) the comma is the
decimal mark and only semicolons, tabs, spaces and newlines separate.

A sample is one-dimensional, so a body is one column (a value per line), one row, or a
table from which ``column`` (a header name or a 1-based number) picks one column; a
table is never flattened silently. Several cells on every line make a table; lines of
unequal length are refused unless separated by spaces only (a dump of numbers) or
``layout=flat`` asks for every cell in reading order. A body that mixes ';' and ','
is refused with the hint that commas may be decimal marks.

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
    """Drop a byte-order mark, unify line ends and drop trailing blank lines (a pasted
    column often ends with some; they are not cells)."""
    if text.startswith("\ufeff"):
        text = text[1:]
    text = text.replace("\r\n", "\n").replace("\r", "\n")
    cut = text.find("\n", len(text.rstrip(" \t\u00a0\n")))  # the line end after the last cell
    return text if cut < 0 else text[:cut]


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


def _show(token) -> str:
    text = str(token)
    return repr(text if len(text) <= 40 else text[:37] + "...")


def _fault(code: str, index: int, detail: str, where: dict) -> Problem:
    return Problem(code, detail, errors=[{"pointer": f"/values/{index}", "detail": detail, **where}])


def _all_numbers(tokens: np.ndarray, decimal: str) -> np.ndarray | None:
    """The common case in one conversion: every token a finite number, none missing (each
    missing-value marker either fails to convert or converts to NaN). ``None`` otherwise."""
    if decimal == ",":
        tokens = np.strings.replace(tokens, ",", ".")
    if (np.strings.find(tokens, "_") >= 0).any():
        return None
    try:
        values = tokens.astype(np.float64)
    except ValueError:
        return None
    return values if np.isfinite(values).all() else None


def _convert(cells: list[str] | np.ndarray, *, decimal: str, missing: str, where) -> tuple[np.ndarray, int]:
    """Cells to finite floats; ``where(index)`` gives the line and column of a fault."""
    tokens = np.array(cells, dtype=_STRINGS)
    tokens = np.strings.strip(np.strings.strip(tokens), '"')
    clean = _all_numbers(tokens, decimal)
    if clean is not None:
        return clean, 0
    absent = np.isin(tokens, _MISSING)
    n_missing = int(np.count_nonzero(absent))
    if n_missing and missing == "reject":
        i = int(np.argmax(absent))
        raise _fault("missing-values-rejected", i,
                     f"value {i} is missing ({_show(tokens[i])}) and the request asked for missing=reject", where(i))
    present = np.flatnonzero(~absent)
    tokens = shown = tokens[present]
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
                     f"value {i} is {_show(shown[lo])}, which is neither a number nor a missing-value marker", where(i)) from None
    bad = ~np.isfinite(values)
    if bad.any():
        j = int(np.argmax(bad))
        i = int(present[j])
        raise _fault("non-finite-value", i, f"value {i} is {_show(shown[j])}, which is not finite", where(i))
    return values, n_missing


def _header(first_line: str, explicit: str, next_line: str) -> list[str] | None:
    """The header's names, or None when the first line is data. A header splits on an
    explicit separator if it has one; on spaces only when the data lines split into the
    same number of cells (so a name like "weight (kg)" stays whole)."""
    sep = next((c for c in explicit if c in first_line), None)
    if sep is not None:
        cells = first_line.split(sep)
    else:
        words = first_line.split()
        cells = words if len(words) > 1 and len(next_line.split()) == len(words) else [first_line]
    return [_unquote(c) for c in cells] if _looks_like_header(cells) else None


def _too_many(count: int, max_values: int) -> Problem:
    return Problem("too-large", f"the body holds {count} values; this service accepts at most {max_values} per sample")


def parse_text_values(
    text: str,
    *,
    decimal: str = ".",
    column: str | None = None,
    layout: str = "auto",
    missing: str = "drop",
    max_values: int,
) -> ParsedText:
    """Parse one sample from a text body; see the module docstring for the rules."""
    text = _normalise(text)
    explicit = ";\t" if decimal == "," else ",;\t"
    if not text:
        return ParsedText(np.empty(0), 0, 0, None)
    if decimal == "." and "," in text and ";" in text and layout == "auto":
        raise Problem(
            "invalid-value",
            "the body mixes ';' and ',' between values; if commas are decimal marks (1,5) pass decimal=, "
            "(then ';', tabs, spaces and newlines separate), otherwise separate with one character",
            errors=[{"pointer": "/decimal", "detail": "ambiguous separators"}],
        )
    first_line, _, rest = text.partition("\n")
    names = _header(first_line, explicit, rest.partition("\n")[0])
    body, offset = (rest, 1) if names else (text, 0)
    label = names[0] if names and len(names) == 1 else None
    if layout == "flat":
        if column is not None:
            raise Problem("invalid-request", "column= picks a table column; it does not apply with layout=flat",
                          errors=[{"pointer": "/column", "detail": "not with layout=flat"}])
        return _flat(body, explicit, decimal, missing, max_values, offset, " ".join(names) if names else None)
    sep = next((c for c in explicit if c in body), " ")
    squeezed = _SPACES.sub(" ", body) if sep == " " else body
    raw_lines = np.array(squeezed.split("\n") if body else [], dtype=_STRINGS)
    if raw_lines.size > max_values:
        raise _too_many(int(raw_lines.size), max_values)
    lines = np.strings.strip(raw_lines)
    blank = np.strings.str_len(lines) == 0
    counts = np.where(blank, 0, np.strings.count(lines, sep) + 1)
    widths = np.unique(counts[~blank])
    table = (names is not None and len(names) > 1) or (int((~blank).sum()) > 1 and widths.size > 0 and widths.max() > 1)
    if not table:
        if column is not None:
            raise Problem("invalid-request", "column= picks a column of a table; this body holds a single column or row",
                          errors=[{"pointer": "/column", "detail": "not a table"}])
        cells = np.strings.strip(raw_lines, " ") if sep == " " and raw_lines.size else None
        if cells is not None and not (np.strings.find(cells, " ") >= 0).any():
            # One cell per line (spaces split cells, as in _cells): the lines are the cells.
            values, n_missing = _convert(cells, decimal=decimal, missing=missing,
                                         where=lambda i: {"line": i + 1 + offset, "column": 1})
            return ParsedText(values, n_missing, int(cells.size), label)
        return _flat(body, explicit, decimal, missing, max_values, offset, label)
    if names is not None and len(names) == 1:
        width = int(widths.max())
        hint = " If commas are decimal marks (1,5), pass decimal=,." if sep == "," else ""
        raise Problem("invalid-value", f"the header names one column but the lines hold up to {width} cells.{hint}",
                      errors=[{"detail": "header and lines disagree", "line": int(np.argmax(counts > 1)) + 1 + offset}])
    width = len(names) if names else int(widths.max())
    ragged = (counts != width) & ~blank
    if ragged.any() and sep == " " and names is None:
        # Lines of unequal length separated by spaces only: a dump of numbers, not a table.
        return _flat(body, explicit, decimal, missing, max_values, offset, label)
    if ragged.any():
        row = int(np.argmax(ragged))
        detail = (f"line {row + 1 + offset} has {int(counts[row])} cells where the table has {width}; send a rectangular "
                  "table, one value per line, or pass layout=flat to read every cell in order")
        raise Problem("invalid-value", detail, errors=[{"detail": detail, "line": row + 1 + offset}])
    k = _pick_column(column, names, width, sep, decimal)
    if not lines.size:  # a header and no data lines
        return ParsedText(np.empty(0), 0, 0, names[k] if names else None)
    lines = np.where(blank, sep * (width - 1), lines)
    cells = np.array(sep.join(lines.tolist()).split(sep), dtype=_STRINGS).reshape(-1, width)[:, k].tolist()
    values, n_missing = _convert(cells, decimal=decimal, missing=missing,
                                 where=lambda i: {"line": i + 1 + offset, "column": k + 1})
    return ParsedText(values, n_missing, len(cells), names[k] if names else None)


def _pick_column(column: str | None, names: list[str] | None, width: int, sep: str, decimal: str) -> int:
    if column is None:
        described = f" ({', '.join(names)})" if names else ""
        hint = " If commas are decimal marks (1,5), pass decimal=, instead." if sep == "," and width == 2 and decimal == "." else ""
        raise Problem(
            "invalid-request",
            f"the body is a table with {width} columns{described}; a sample is one column: choose it with "
            f"column=<{'name or ' if names else ''}1-based number>.{hint}",
            errors=[{"pointer": "/column", "detail": "required for a table with several columns"}],
        )
    if names and column in names:
        if names.count(column) > 1:
            raise Problem("invalid-request", f"the header names {column!r} {names.count(column)} times; pick the column by number",
                          errors=[{"pointer": "/column", "detail": "ambiguous name"}])
        return names.index(column)
    if column.isdigit() and 1 <= int(column) <= width:
        return int(column) - 1
    named = f"a header name ({', '.join(names)}) nor " if names else ""
    raise Problem("invalid-request", f"column {column!r} is neither {named}a number from 1 to {width}",
                  errors=[{"pointer": "/column", "detail": "no such column"}])


def _flat(body: str, explicit: str, decimal: str, missing: str, max_values: int, offset: int, label) -> ParsedText:
    cells = _cells(body, explicit) if body else []
    if len(cells) > max_values:
        raise _too_many(len(cells), max_values)

    def where(index: int) -> dict:
        seen = 0
        for number, line in enumerate(body.split("\n"), start=1 + offset):
            count = len(_cells(line, explicit))
            if index < seen + count:
                return {"line": number, "column": index - seen + 1}
            seen += count
        return {}

    if not cells:
        return ParsedText(np.empty(0), 0, 0, label)
    values, n_missing = _convert(cells, decimal=decimal, missing=missing, where=where)
    return ParsedText(values, n_missing, len(cells), label)
