"""Reading the numbers of a block in bulk: pandas' C reader instead of a Python split per row.

The block's rows go to ``pandas.read_csv`` as bytes, with the delimiter,
decimal mark and quoting the sniffer found.  Nothing pandas reads is taken
on trust where it could differ from reading the rows one by one
(:mod:`rheofit.ingest.table`):

* the cells of every row are first counted in the bytes, the way
  ``Dialect.split`` cuts a line; a block with a row narrower than its
  header, or wider other than by empty trailing cells, is not read here;
* only the written missing values of ``dialect.MISSING`` become NaN;
* in rows that hold text (letters, symbols), the values pandas may read
  where ``float`` would refuse (0 and 1, which it also reads from
  True/False, and infinities) are checked cell by cell.

Anything unusual (a cell pandas cannot read, a NUL byte, odd or non-ASCII
whitespace between aligned columns) gives None, and the caller reads the block row by
row as before, so that the message names the line and the column.
Chosen by measurement (benchmarks/import_speed.py): numpy's string-to-float
conversion is no faster than ``float`` (about 0.6 us a value), pandas' C
reader about ten times faster; a whole import of 2,000,000 rows went from
2.6-8.1 s to 0.5-0.8 s.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass

import numpy as np

from rheofit.ingest.dialect import MISSING, Dialect, cell_value
from rheofit.ingest.lines import Lines

#: the missing-value texts as exports write them (pandas matches them exactly; others fall back).
#: Infinities are left out: pandas reads them as float does, and they become NaN afterwards
#: (as NA values they would cost pandas a look-up per number).
MISSING_TEXTS = sorted({spelling for text in MISSING for spelling in (text, text.upper(), text.capitalize())
                        if "inf" not in text} | {"NaN", "-NaN", "N/A", "#N/A"})

#: rows per chunk handed over by pandas
CHUNK_ROWS = 1 << 18

# bytes between whitespace-aligned cells (1), and bytes at which str.split() may cut but pandas does not (2)
_SPACING = bytes(1 if b in b" \t\n\r" else 2 if b in b"\x0b\x0c\x1c\x1d\x1e\x1f" or b >= 0x80 else 0
                 for b in range(256))


@dataclass(frozen=True)
class Shape:
    """How the rows of a block are cut into cells in the file."""

    fields: int  # cells in the widest row (the columns beyond the block's width are empty)
    uniform: bool  # every row has the same number of delimiters


def shape(lines: Lines, rows: np.ndarray, dialect: Dialect, width: int) -> Shape | None:
    """The rows' shape when every row has ``width`` cells and at most empty ones after them; else None."""
    counts = [_cells(piece, starts, ends, dialect, width) for piece, starts, ends in lines.pieces(rows)]
    if any(c is None for c in counts):
        return None
    counts = np.concatenate(counts)
    return Shape(int(counts.max()), bool(counts.min() == counts.max()))


def _cells(piece: bytes, starts: np.ndarray, ends: np.ndarray, dialect: Dialect, width: int) -> np.ndarray | None:
    """Cells per row of one piece, or None when a row is not ``width`` cells (plus empty ones) wide."""
    if b"\x00" in piece:
        return None
    codes = np.frombuffer(piece, dtype=np.uint8)
    if dialect.delimiter is None:
        spacing = np.frombuffer(piece.translate(_SPACING), dtype=np.uint8)
        if (spacing == 2).any():
            return None
        separator = spacing == 1
        first = np.flatnonzero(~separator[1:] & separator[:-1]) + 1
        first = np.concatenate(([0], first)) if codes.size and not separator[0] else first
        counts = np.diff(np.searchsorted(first, np.append(starts, codes.size)))  # no cell starts in a line end
        return counts if (counts == width).all() else None
    is_delimiter = codes == ord(dialect.delimiter)
    delimiters = np.flatnonzero(is_delimiter)
    if dialect.quoted and b'"' in piece:
        delimiters = _outside_quotes(codes, is_delimiter, delimiters, starts, ends)
        if delimiters is None:
            return None
    before = np.searchsorted(delimiters, np.append(starts, codes.size))  # no delimiter in a line end
    counts = np.diff(before) + 1
    if (counts < width).any():
        return None
    wide = np.flatnonzero(counts > width)  # trailing cells must be empty: only delimiters up to the line end
    if wide.size and (delimiters[before[wide] + width - 1] != ends[wide] - (counts[wide] - width)).any():
        return None
    return counts


def _outside_quotes(codes, is_delimiter, delimiters, starts, ends) -> np.ndarray | None:
    """The delimiters not inside quoted cells; None for a quote that neither opens nor closes a cell."""
    quotes = np.flatnonzero(codes == ord('"'))
    row = np.searchsorted(starts, quotes, side="right") - 1
    opens = (quotes == starts[row]) | is_delimiter[np.maximum(quotes - 1, 0)]
    closes = (quotes + 1 == ends[row]) | is_delimiter[np.minimum(quotes + 1, codes.size - 1)]
    per_row = np.searchsorted(quotes, ends) - np.searchsorted(quotes, starts)
    if not (opens | closes).all() or (per_row % 2).any():
        return None
    row_of = np.searchsorted(starts, delimiters, side="right") - 1
    inside = (np.searchsorted(quotes, delimiters) - np.searchsorted(quotes, starts[row_of])) % 2 == 1
    return delimiters[~inside]


def read(lines: Lines, rows: np.ndarray, dialect: Dialect, found: Shape, numeric: list[int],
         text: list[int]) -> dict[int, np.ndarray | list[str]] | None:
    """Columns ``numeric`` as float arrays (missing values NaN) and ``text`` as uncleaned strings.

    None when pandas cannot read them or reads something the row-by-row
    reader would read otherwise.
    """
    import pandas  # loaded only for blocks large enough to be read in bulk

    if text and dialect.quoted and dialect.delimiter is not None:
        return None  # quoted labels are left to the csv module, which reads them as before
    columns = _in_chunks(lines, rows, numeric, text, _options(dialect, found, numeric, text, pandas), pandas)
    if columns is None or not _agrees(lines, rows, dialect, columns, numeric):
        return None
    for p in numeric:
        infinite = np.isinf(columns[p])
        if infinite.any():
            columns[p] = np.where(infinite, np.nan, columns[p])
    return columns


def _in_chunks(lines: Lines, rows, numeric, text, options: dict, pandas) -> dict | None:
    """The columns, read chunk by chunk into arrays made for them (no concatenation at the end)."""
    columns = {**{p: np.empty(rows.size) for p in numeric}, **{p: [] for p in text}}
    options = dict(options, usecols=sorted(set(numeric) | set(text)))
    if rows[-1] - rows[0] + 1 == rows.size:  # consecutive lines: pandas reads the file itself
        source, options["nrows"] = lines.opened_at(int(rows[0])), rows.size
        ascii_only = not lines.text[rows].any()  # every byte outside ASCII is a text byte
        options["encoding"] = "utf-8" if ascii_only else lines.codec
    else:
        source = _Feed(lines, rows)
    done = 0
    try:
        with pandas.read_csv(source, chunksize=CHUNK_ROWS, **options) as chunks:
            for frame in chunks:
                if done + len(frame) > rows.size:
                    return None
                for p in numeric:
                    columns[p][done : done + len(frame)] = frame[p].to_numpy(dtype=float)
                for p in text:
                    columns[p] += frame[p].tolist()
                done += len(frame)
    except ValueError:  # a cell that is not a number, a malformed row, ...
        return None
    return columns if done == rows.size else None


def _options(dialect: Dialect, found: Shape, numeric, text, pandas) -> dict:
    quoted = dialect.quoted and dialect.delimiter is not None
    options = dict(
        sep=r"\s+" if dialect.delimiter is None else dialect.delimiter,
        header=None, names=list(range(found.fields)), index_col=False,
        dtype={**{p: np.float64 for p in numeric}, **{p: object for p in text}},
        decimal=dialect.decimal, quoting=csv.QUOTE_MINIMAL if quoted else csv.QUOTE_NONE,
        keep_default_na=False, na_values={p: MISSING_TEXTS for p in numeric},
        skip_blank_lines=False, engine="c", encoding="utf-8",
    )
    if int(pandas.__version__.split(".")[0]) < 3:  # pandas 2 reads the last digit exactly only with this
        options["float_precision"] = "round_trip"
    return options


def _agrees(lines: Lines, rows: np.ndarray, dialect: Dialect, columns: dict, numeric: list[int]) -> bool:
    """True when the first and last rows, and the doubtful values in rows with text, are what the
    row-by-row reader reads."""
    with_text = np.flatnonzero(lines.text[rows])
    for p in numeric:
        values = columns[p][with_text]
        doubtful = with_text[~np.isfinite(values) | (values == 0) | (values == 1)]
        for k in np.concatenate(([0, rows.size - 1], doubtful)):
            try:
                expected = cell_value(dialect.split(lines[int(rows[k])])[p], dialect.decimal)
            except ValueError:
                return False
            found = columns[p][k]
            if not (expected == found or not (np.isfinite(expected) or np.isfinite(found))):
                return False
    return True


class _Feed(io.RawIOBase):
    """The bytes of the rows, in UTF-8, as a binary file to read from."""

    def __init__(self, lines: Lines, rows: np.ndarray):
        self._pieces = (_utf8(piece, lines.codec) for piece, _, _ in lines.pieces(rows))
        self._rest = memoryview(b"")

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        while not len(self._rest):
            piece = next(self._pieces, None)
            if piece is None:
                return 0
            self._rest = memoryview(piece)
        n = min(len(buffer), len(self._rest))
        buffer[:n] = self._rest[:n]
        self._rest = self._rest[n:]
        return n


def _utf8(piece: bytes, codec: str) -> bytes:
    return piece if codec == "utf-8" or piece.isascii() else piece.decode(codec).encode("utf-8")
