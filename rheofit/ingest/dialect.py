"""Sniffing how a text export separates its columns and writes its decimals.

Delimiters tried: tab, semicolon, comma, pipe, and runs of spaces
(whitespace-aligned columns).  The winner is the one that splits the most
lines into two or more numbers with the same count; decimal commas
(``1,5``) are recognised when the delimiter is not a bare comma.
"""

from __future__ import annotations

import csv
import re
from collections import Counter
from dataclasses import dataclass

#: cell texts that mean "no value" (compared lower-case, stripped)
MISSING = frozenset({"", "nan", "-nan", "--", "---", "-", "—", "–", "n/a", "na", "#n/a", "null", "none", "?", "*",
                     "inf", "-inf", "+inf",
                     # spreadsheet error cells: a formula with no value, not a measurement
                     "#div/0!", "#value!", "#ref!", "#num!", "#name?", "#null!"})

_NUMBER = re.compile(r"^[-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?$")
_COMMA_DECIMAL = re.compile(r"^[-+]?\d*,\d+(?:[eE][-+]?\d+)?$")
_DOT_DECIMAL = re.compile(r"^[-+]?\d*\.\d+(?:[eE][-+]?\d+)?$")
_HEADER_GAP = re.compile(r"\t|\s{2,}")
_CANDIDATES = ("\t", ";", ",", "|", None)  # None: runs of whitespace
_NAMES = {"\t": "tab", ";": "semicolon", ",": "comma", "|": "pipe", None: "whitespace"}


@dataclass(frozen=True)
class Dialect:
    """How the columns of a file are separated and how its decimals are written."""

    delimiter: str | None  # None: columns aligned with spaces
    decimal: str = "."
    quoted: bool = False

    @property
    def name(self) -> str:
        """Plain name of the delimiter, e.g. ``"semicolon"``."""
        return _NAMES[self.delimiter]

    def split(self, line: str) -> list[str]:
        """The cells of a data line, stripped of spaces and quotes."""
        if self.delimiter is None:
            return [clean(c) for c in line.split()]
        if self.quoted and '"' in line:
            return [c.strip() for c in next(csv.reader([line], delimiter=self.delimiter))]
        return [clean(c) for c in line.split(self.delimiter)]

    def split_header(self, line: str, width: int | None = None) -> list[str]:
        """The cells of a header or units line.

        With whitespace-aligned columns, names may hold single spaces
        ("Shear rate"), so columns are split at tabs or two or more spaces;
        single spaces are used only when that gives ``width`` cells.
        """
        if self.delimiter is not None:
            return self.split(line)
        cells = [clean(c) for c in _HEADER_GAP.split(line.strip())]
        if width is not None and len(cells) != width and len(line.split()) == width:
            return [clean(c) for c in line.split()]
        return cells


def clean(cell: str) -> str:
    """A cell without surrounding spaces and double quotes."""
    cell = cell.strip()
    if len(cell) >= 2 and cell[0] == cell[-1] == '"':
        cell = cell[1:-1].strip()
    return cell


def is_number(cell: str) -> bool:
    """True for a number written with a decimal point or comma."""
    return bool(_NUMBER.match(cell))


def is_missing(cell: str) -> bool:
    """True for an empty cell or a written 'no value' (NaN, --, n/a, ...)."""
    return cell.strip().lower() in MISSING


def cell_value(cell: str, decimal: str = ".") -> float:
    """The number in a data cell: NaN for a missing value; ValueError for text.

    Quotes and spaces around the number and a typographic minus sign
    (U+2212) are allowed; with ``decimal=","`` commas are decimal marks.
    """
    if decimal == ",":
        cell = cell.replace(",", ".")
    try:
        return float(cell)
    except ValueError:
        cell = clean(cell).replace("\u2212", "-")  # typographic minus sign
        return float("nan") if is_missing(cell) else float(cell)


def numeric_cells(cells: list[str]) -> int:
    """How many cells are numbers; -1 when a cell is neither a number nor missing."""
    count = 0
    for cell in cells:
        if is_number(cell):
            count += 1
        elif not is_missing(cell):
            return -1
    return count


def sniff(lines: list[str]) -> Dialect | None:
    """The dialect of a file from a sample of its lines.

    None when no delimiter splits any line into two or more numbers (a
    single column, a header only, or no numbers at all).
    """
    sample = _sample(lines)
    quoted = any('"' in line for line in sample)
    scores = {delimiter: _score(sample, Dialect(delimiter, ",", quoted)) for delimiter in _CANDIDATES}
    best = max(_CANDIDATES, key=lambda d: scores[d])  # the first of equals wins
    if scores[best] == (0, 0):
        return None
    return Dialect(best, _decimal(sample, Dialect(best, ",", quoted)), quoted)


def _sample(lines: list[str], head: int = 400, tail: int = 100) -> list[str]:
    filled = [line for line in lines[: head * 4] if line.strip()][:head]
    end = [line for line in lines[-tail * 4 :] if line.strip()][-tail:]
    return filled + end if len(lines) > head * 4 else filled


def _score(sample: list[str], dialect: Dialect) -> tuple[int, int]:
    """(rows of numbers only, rows with two numbers or more), each at the commonest cell count.

    Rows of numbers only decide first; the second count lets a column of
    text labels ride along when no delimiter gives pure rows of numbers.
    """
    strict, relaxed = Counter(), Counter()
    for line in sample:
        cells = dialect.split(line)
        while len(cells) > 2 and cells[-1] == "":
            cells.pop()
        if len(cells) < 2:
            continue
        if numeric_cells(cells) >= 1:
            strict[len(cells)] += 1
        if sum(1 for c in cells if is_number(c)) >= 2:
            relaxed[len(cells)] += 1
    return max(strict.values(), default=0), max(relaxed.values(), default=0)


def _decimal(sample: list[str], dialect: Dialect) -> str:
    if dialect.delimiter == "," and not dialect.quoted:
        return "."
    commas = dots = 0
    for line in sample:
        cells = dialect.split(line)
        commas += sum(1 for c in cells if _COMMA_DECIMAL.match(c))
        dots += sum(1 for c in cells if _DOT_DECIMAL.match(c))
    return "," if commas > dots else "."
