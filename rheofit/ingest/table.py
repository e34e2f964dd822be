"""The cells of a block's data rows, as numbers per column.

Fast path: when every row has the same number of delimiters the whole block
is split at once and each column converted with ``float`` in C; otherwise
rows are split one by one so that a ragged row can be named.  Missing values
(empty, NaN, --, n/a, ...) become NaN; any other text in a numeric column is
an error naming its line and column.
"""

from __future__ import annotations

import numpy as np

from rheofit.errors import InputFileError
from rheofit.ingest.columns import Column
from rheofit.ingest.dialect import Dialect, clean, is_missing
from rheofit.ingest.layout import Block


class Cells:
    """The data rows of one block, split into cells on demand."""

    def __init__(self, lines: list[str], block: Block, dialect: Dialect, shown: str):
        self.texts = [lines[i] for i in block.rows]
        self.line_numbers = np.asarray(block.rows, dtype=int) + 1
        self.block, self.dialect, self.shown = block, dialect, shown
        self._columns = self._split()

    def __len__(self) -> int:
        return len(self.texts)

    def text(self, column: Column) -> list[str]:
        """The cells of a column, cleaned of spaces and quotes."""
        return [clean(c) for c in self._columns[column.position]]

    def numbers(self, column: Column) -> np.ndarray:
        """The column as floats; missing values as NaN (inf counts as missing)."""
        cells = self._columns[column.position]
        if self.dialect.decimal == ",":
            cells = [c.replace(",", ".") for c in cells]
        try:
            values = np.fromiter(map(float, cells), dtype=float, count=len(cells))
        except ValueError:
            values = self._slow_numbers(cells, column)
        values[~np.isfinite(values)] = np.nan
        return values

    def _slow_numbers(self, cells: list[str], column: Column) -> np.ndarray:
        values = np.empty(len(cells))
        for k, cell in enumerate(cells):
            cell = clean(cell).replace("\u2212", "-")  # typographic minus sign
            if is_missing(cell):
                values[k] = np.nan
                continue
            try:
                values[k] = float(cell)
            except ValueError:
                raise self._not_a_number(k, column) from None
        return values

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
