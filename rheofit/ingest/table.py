"""The cells of a block's data rows, as numbers per column.

A large block is read in bulk (:mod:`rheofit.ingest.bulk`, pandas' C reader)
once the columns wanted are known (:meth:`Cells.plan`).  Otherwise, and
whenever the bulk reader declines, rows are split in Python: the whole
block at once when every row has the same number of delimiters, else row
by row so that a ragged row can be named.  Missing values (empty, NaN, --,
n/a, ...) become NaN; any other text in a numeric column is an error
naming its line and column.
"""

from __future__ import annotations

import sys

import numpy as np

from rheofit.errors import InputFileError
from rheofit.ingest import bulk
from rheofit.ingest.columns import Column
from rheofit.ingest.dialect import Dialect, cell_value, clean
from rheofit.ingest.layout import Block
from rheofit.ingest.lines import Lines

#: blocks from this many rows on are read in bulk when pandas is loaded already (below, splitting is as quick)
BULK_ROWS = 5_000
#: and from this many when pandas must be loaded first: loading it (once per process) takes about as
#: long as splitting this many rows one by one (both measured together in benchmarks/import_speed.py's
#: setting: about 1.1 s each on the loaded development machine)
BULK_ROWS_COLD = 200_000


class Cells:
    """The data rows of one block, split into cells on demand."""

    def __init__(self, lines: Lines, block: Block, dialect: Dialect, shown: str):
        self.lines, self.rows = lines, block.rows
        self.line_numbers = block.rows + 1
        self.block, self.dialect, self.shown = block, dialect, shown
        self._texts = self._columns = None
        self._bulk = {}
        large = block.rows.size >= (BULK_ROWS if "pandas" in sys.modules else BULK_ROWS_COLD)
        self._shape = bulk.shape(lines, block.rows, dialect, block.width) if large else None
        if self._shape is None:
            self._columns = self._split()

    def __len__(self) -> int:
        return self.rows.size

    @property
    def texts(self) -> list[str]:
        """The data lines as text."""
        if self._texts is None:
            self._texts = [self.lines[int(i)] for i in self.rows]
        return self._texts

    def plan(self, numeric: list[Column], text: list[Column] = ()) -> None:
        """Read these columns together in one bulk pass, when the block is large enough."""
        if self._shape is None or self._bulk:
            return
        found = bulk.read(self.lines, self.rows, self.dialect, self._shape,
                          [c.position for c in numeric], [c.position for c in text])
        if found is None:
            self._shape = None
        else:
            self._bulk = found

    def text(self, column: Column) -> list[str]:
        """The cells of a column, cleaned of spaces and quotes."""
        if column.position in self._bulk:
            split_at_once = self.dialect.delimiter is not None and self._shape.uniform
            cells = self._bulk[column.position]
            return [clean(c) for c in cells] if split_at_once else [clean(clean(c)) for c in cells]
        return [clean(c) for c in self._split_columns()[column.position]]

    def numbers(self, column: Column) -> np.ndarray:
        """The column as floats; missing values as NaN (inf counts as missing)."""
        if column.position in self._bulk:
            return self._bulk[column.position]
        cells = self._split_columns()[column.position]
        try:
            values = np.fromiter(map(float, cells if self.dialect.decimal == "." else
                                     (c.replace(",", ".") for c in cells)), dtype=float, count=len(cells))
        except ValueError:
            values = self._slow_numbers(cells, column)
        values[~np.isfinite(values)] = np.nan
        return values

    def _slow_numbers(self, cells: list[str], column: Column) -> np.ndarray:
        values = np.empty(len(cells))
        for k, cell in enumerate(cells):
            try:
                values[k] = cell_value(cell, self.dialect.decimal)
            except ValueError:
                raise self._not_a_number(k, column) from None
        return values

    def _split_columns(self) -> list[list[str]]:
        if self._columns is None:
            self._columns = self._split()
        return self._columns

    def _not_a_number(self, k: int, column: Column) -> InputFileError:
        original = self.dialect.split(self.texts[k])[column.position]
        hint = ""
        if "," in original and self.dialect.decimal == ".":
            hint = " (decimal commas are read only when columns are separated by semicolons, tabs or spaces)"
        return InputFileError(
            f"File '{self.shown}', line {self.line_numbers[k]}, column {column.shown}: '{original}' is "
            f"not a number{hint}; correct or delete that row (a missing value may be left empty or "
            "written NaN, -- or n/a)."
        )

    def _split(self) -> list[list[str]]:
        """Cells per column position (a list per column)."""
        fast = self._split_fast()
        if fast is not None:
            return fast
        rows = [self.dialect.split(t) for t in self.texts]
        width = self.block.width
        for k, row in enumerate(rows):
            while len(row) > width and row[-1] == "":
                row.pop()
            if len(row) != width:
                raise self._ragged(k, len(row))
        return [list(column) for column in zip(*rows)]

    def _split_fast(self) -> list[list[str]] | None:
        delimiter, width = self.dialect.delimiter, self.block.width
        if delimiter is None or self.dialect.quoted:
            return None
        counts = {t.count(delimiter) for t in self.texts}
        if len(counts) != 1:
            return None
        per_row = counts.pop() + 1
        if per_row < width:
            return None
        flat = delimiter.join(self.texts).split(delimiter)
        if any(c.strip() for j in range(width, per_row) for c in flat[j::per_row]):
            return None
        return [flat[j::per_row] for j in range(width)]

    def _ragged(self, k: int, found: int) -> InputFileError:
        if self.block.header_line is not None:
            expected = f"the header on line {self.block.header_line + 1} names {self.block.width} columns"
        else:
            expected = f"the rows above have {self.block.width}"
        return InputFileError(
            f"File '{self.shown}', line {self.line_numbers[k]} has {found} values where {expected}; "
            "fix that row (leave a missing value empty or write NaN) or the header."
        )
