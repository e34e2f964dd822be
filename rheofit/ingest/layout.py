"""Finding the table(s) in a file: preamble, header, units row, data rows, blocks.

A header is a line naming at least two of shear rate, viscosity and stress
(or the columns named by the caller).  Each header starts a block; the data
rows of a block run until the last line that looks like data before the
next header.  Lines before a header (metadata such as ``Sample: A``) belong
to that header's block.  A file without such a header is read as one block
whose header, if any, is the line above the first row of numbers.
"""

from __future__ import annotations

import re
from collections import Counter
from dataclasses import dataclass, field

import numpy as np

from rheofit.errors import InputFileError
from rheofit.ingest.columns import flow_roles_in, is_units_row
from rheofit.ingest.dialect import Dialect, clean, is_number, numeric_cells
from rheofit.ingest.lines import Lines

_TEXT = re.compile(r"[^\d\s.,;:|+\-eE\"']")
_DIGIT = re.compile(r"\d")
_NO_DIGITS = str.maketrans("", "", "0123456789")


@dataclass
class Block:
    """One table: its header, units row, data rows and the lines before it."""

    header_line: int | None  # 0-based index of the header line, None without a header
    header: list[str] | None
    units_line: int | None
    units: list[str] | None
    width: int
    rows: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=np.int32))  # 0-based indices of the data lines
    preamble: list[str] = field(default_factory=list)


@dataclass
class Layout:
    """All blocks of a file and the text lines after the last one."""

    blocks: list[Block]
    trailer: list[str]


def find_layout(lines: Lines, dialect: Dialect, overrides: dict, shown: str) -> Layout:
    """Blocks of ``lines``; raises InputFileError for a header without data."""
    headers = _headers(lines, dialect, overrides)
    if headers:
        begin = headers[0]
    else:
        header, begin = _header_above_numbers(lines, dialect)
        headers = [header]
    blocks, preamble = [], [line for line in lines[:begin] if line.strip()]
    for k, start in enumerate(headers):
        stop = headers[k + 1] if k + 1 < len(headers) else len(lines)
        block = _block(lines, start, stop, dialect) if start is not None else _headless(lines, begin, dialect)
        if block.rows.size:
            block.preamble, preamble = preamble, []
            blocks.append(block)
        else:  # a header line without data: keep it as text
            preamble.append(lines[start])
        preamble += _text_after(lines, block, stop)
    if not blocks:
        raise _header_only(shown, headers[0], lines)
    return Layout(blocks, preamble)


def _header_only(shown: str, index: int, lines: Lines) -> InputFileError:
    return InputFileError(
        f"File '{shown}' has a header (line {index + 1}: '{lines[index].strip()}') but no data rows "
        "below it; export the sweep again with its measured points."
    )


def _headers(lines: Lines, dialect: Dialect, overrides: dict) -> list[int]:
    """Indices of the header lines.

    Lines with text are judged once per skeleton (the line without its
    digits), so that a column of labels or NaNs costs little on large files.
    """
    judged: dict[str, bool] = {}
    found = []
    for i in np.flatnonzero(lines.text):
        skeleton = lines[i].translate(_NO_DIGITS)
        if skeleton not in judged:
            judged[skeleton] = _is_header(lines[i], dialect, overrides)
        if judged[skeleton]:
            found.append(int(i))
    units_rows = {i for i in found if i - 1 in found and is_units_row(dialect.split_header(lines[i]))}
    return [i for i in found if i not in units_rows]


def _is_header(line: str, dialect: Dialect, overrides: dict) -> bool:
    cells = _trimmed(dialect.split_header(line))
    if len(cells) < 2 and dialect.delimiter is None:
        cells = line.split()  # names with single spaces between them
    return len(cells) >= 2 and flow_roles_in(cells, overrides) >= 2


def _header_above_numbers(lines: Lines, dialect: Dialect) -> tuple[int | None, int]:
    """(index of the header above the first row of numbers or None, where the block begins)."""
    first = _first_data(lines, dialect)
    above = first - 1
    if above >= 1 and is_units_row(_trimmed(dialect.split_header(lines[above]))):
        above -= 1
    if above < 0 or not lines[above].strip():
        return None, first
    cells = _trimmed(dialect.split_header(lines[above]))
    if len(cells) >= 2 and numeric_cells(cells) < 1:
        return above, above
    return None, first


def _first_data(lines: Lines, dialect: Dialect) -> int:
    """Index of the first row of numbers (or, failing that, of two numbers among text)."""
    for i, line in enumerate(lines):
        if _is_data(line, dialect, None):
            return i
    two_numbers = (i for i, line in enumerate(lines) if sum(1 for c in dialect.split(line) if is_number(c)) >= 2)
    return next(two_numbers, 0)  # sniff() found such a line


def _headless(lines: Lines, begin: int, dialect: Dialect) -> Block:
    """The one block of a file without a header, from its first row of numbers."""
    block = Block(None, None, None, None, len(_trimmed(dialect.split(lines[begin]))))
    block.rows = _data_rows(lines, begin, len(lines), dialect, block.width)
    return block


def _block(lines: Lines, start: int, stop: int, dialect: Dialect) -> Block:
    """The block whose header is on line index ``start``, with an optional units row."""
    header = _trimmed(dialect.split_header(lines[start]))
    width = _data_width(lines, start + 1, stop, dialect) or len(header)
    header = _trimmed(dialect.split_header(lines[start], width))
    block = Block(start, header, None, None, len(header))
    begin = start + 1
    if begin < stop and is_units_row(dialect.split_header(lines[begin], len(header))):
        block.units_line, block.units = begin, dialect.split_header(lines[begin], len(header))
        begin += 1
    block.rows = _data_rows(lines, begin, stop, dialect, block.width)
    return block


def _data_width(lines, begin, stop, dialect) -> int | None:
    """Commonest cell count of the first rows of numbers in a range."""
    counts = Counter()
    for line in lines[begin : min(stop, begin + 50)]:
        cells = _trimmed(dialect.split(line))
        if len(cells) >= 2 and numeric_cells(cells) >= 1:
            counts[len(cells)] += 1
    return counts.most_common(1)[0][0] if counts else None


def _data_rows(lines: Lines, begin: int, stop: int, dialect: Dialect, width: int) -> np.ndarray:
    """Indices of the data lines: every non-blank line up to the last one that looks like data.

    Lines between data lines stay in (so that a bad row is reported, not
    skipped), except comment lines starting with '#'.  Lines of digits and
    delimiters only are data without a closer look.
    """
    plain = lines.digit[begin:stop] & ~lines.text[begin:stop]
    data, other = plain.copy(), np.zeros_like(plain)
    for j in np.flatnonzero(~plain):
        line = lines[begin + j]
        if lines.digit[begin + j] and _is_data(line, dialect, width):
            data[j] = True
        elif not (_is_blank(line, dialect) or line.lstrip().startswith("#")):
            other[j] = True
    found = np.flatnonzero(data)
    if found.size == 0:
        return np.zeros(0, dtype=np.int32)
    end = found[-1] + 1
    return (np.flatnonzero((data | other)[:end]) + begin).astype(np.int32)  # half the memory of int64


def _is_data(line: str, dialect: Dialect, width: int | None) -> bool:
    """A row of the table: it holds a digit and ``width`` cells (with width None: a number)."""
    if not _DIGIT.search(line):
        return False
    if width is not None and dialect.delimiter is not None and not dialect.quoted:
        delimiter = dialect.delimiter
        return line.rstrip().rstrip(delimiter).count(delimiter) + 1 == width
    cells = _trimmed(dialect.split(line))
    if width is None:
        return len(cells) >= 2 and numeric_cells(cells) >= 1
    return len(cells) == width and any(is_number(c) for c in cells)


def _is_blank(line: str, dialect: Dialect) -> bool:
    return not line.strip(" \t" + (dialect.delimiter or ""))


def _text_after(lines: Lines, block: Block, stop: int) -> list[str]:
    """Non-blank lines between the block's last data row and ``stop``."""
    after = int(block.rows[-1]) + 1 if block.rows.size else (block.units_line or block.header_line or 0) + 1
    return [line for line in lines[after:stop] if line.strip()]


def _trimmed(cells: list[str]) -> list[str]:
    """Cells without the empty ones a trailing delimiter leaves."""
    end = len(cells)
    while end > 0 and cells[end - 1] == "":
        end -= 1
    return cells[:end]


def no_table(lines: Lines, shown: str, overrides: dict) -> InputFileError:
    """The error for a file in which no delimiter gives rows of two or more numbers."""
    if sum(1 for line in lines if is_number(clean(line))) >= 3:
        return InputFileError(
            f"File '{shown}' holds a single column of numbers; a flow curve needs shear rate and "
            "viscosity (or stress) in separate columns, separated by commas, semicolons, tabs or spaces."
        )
    for delimiter in ("\t", ";", ",", "|", None):
        dialect = Dialect(delimiter)
        for i, line in enumerate(lines):
            if _TEXT.search(line) and _is_header(line, dialect, overrides):
                return _header_only(shown, i, lines)
    return InputFileError(
        f"File '{shown}' holds no rows of numbers; check that it is the exported table of a "
        "shear-rate sweep (columns such as 'Shear rate [1/s]' and 'Viscosity [Pa s]')."
    )
