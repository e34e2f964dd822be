"""The lines of a text file as a sequence of str, cut out of the file's bytes only when asked for.

A large export holds millions of lines; a Python string per line costs far
more time and memory than the numbers in them.  :class:`Lines` reads the
bytes when needed (from bytes, or from the file through a small window) and
finds, in one vectorised pass in chunks, where each line starts and ends
and whether it holds text (a byte outside digits, signs, decimal marks,
delimiters and quotes) and a digit.  Line ends are LF, CRLF or a lone CR,
mixed as the file has them; the last line is the text after the last line
end (empty when the file ends with one), as ``str.split("\n")`` gives it.
"""

from __future__ import annotations

import io
import operator
from collections.abc import Iterator, Sequence

import numpy as np

#: bytes per vectorised step: large enough for numpy to be fast, small enough to keep temporaries small
CHUNK = 1 << 22

_TEXT, _DIGIT = 1, 2
_NUMERIC_BYTES = b"0123456789 \t.,;:|+-eE\"'\n\r"
_CLASSES = bytes(_DIGIT if 48 <= b <= 57 else 0 if b in _NUMERIC_BYTES else _TEXT for b in range(256))


class Lines(Sequence):
    """The lines of ``data`` (bytes, or :class:`FileBytes`) from offset ``begin``, decoded with ``codec``.

    ``watch``, if given, is called with each piece of the bytes as they are
    read (to check the encoding in the same pass).  ``starts`` are the byte
    offsets of the lines, ``breaks`` the lengths of their line ends (0, 1 or
    2 bytes); ``text`` and ``digit`` tell, per line, whether it holds a text
    byte and an ASCII digit.
    """

    def __init__(self, data, codec: str, begin: int = 0, watch=None):
        self.data, self.codec = data, codec
        self.starts, self.breaks, self.text, self.digit = _index(data, begin, watch)

    def __len__(self) -> int:
        return self.starts.size

    def __getitem__(self, key):
        if isinstance(key, slice):
            return [self._line(i) for i in range(*key.indices(len(self)))]
        i = operator.index(key)
        if i < 0:
            i += len(self)
        if not 0 <= i < len(self):
            raise IndexError("line index out of range")
        return self._line(i)

    def __iter__(self) -> Iterator[str]:
        return (self._line(i) for i in range(len(self)))

    def _line(self, i: int) -> str:
        stop = int(self.starts[i + 1]) if i + 1 < len(self) else len(self.data)
        return self.data[int(self.starts[i]) : stop - int(self.breaks[i])].decode(self.codec)

    def _next(self, rows):
        """Where the line after each of ``rows`` starts (the end of the file after the last)."""
        following = self.starts[np.minimum(np.add(rows, 1), len(self) - 1)]
        return np.where(np.add(rows, 1) < len(self), following, len(self.data))

    def ends(self, rows: np.ndarray) -> np.ndarray:
        """Byte offsets where the text of lines ``rows`` ends (before the line end)."""
        return self._next(rows) - self.breaks[rows]

    def pieces(self, rows: np.ndarray) -> Iterator[tuple[bytes, np.ndarray, np.ndarray]]:
        """The bytes of lines ``rows`` (increasing indices), in pieces of about CHUNK bytes.

        Each piece holds whole lines, each with its line end (the file's last
        line may have none), and comes with the offsets of its lines' text in
        the piece (starts, ends).  Lines between ``rows`` are left out.
        """
        offsets = self.starts[rows]
        cuts = np.searchsorted(offsets, np.arange(offsets[0] + CHUNK, offsets[-1] + 1, CHUNK))
        edges = np.unique(np.concatenate(([0], cuts, [rows.size])))
        del offsets
        for a, b in zip(edges[:-1], edges[1:]):
            yield self._piece(rows[a:b])

    def _piece(self, rows: np.ndarray) -> tuple[bytes, np.ndarray, np.ndarray]:
        first, last = int(rows[0]), int(rows[-1])
        low = int(self.starts[first])
        high = int(self._next(last))
        raw = self.data[low:high]
        if last - first + 1 == rows.size:  # consecutive lines: the bytes as they are
            return raw, self.starts[rows] - low, self.ends(rows) - low
        span = np.diff(np.append(self.starts[first : last + 1], high))  # each line with its line end
        keep = np.zeros(span.size, dtype=bool)
        keep[rows - first] = True
        kept = np.frombuffer(raw, dtype=np.uint8)[np.repeat(keep, span)].tobytes()
        starts = np.concatenate(([0], np.cumsum(span[keep])[:-1]))
        return kept, starts, starts + (self.ends(rows) - self.starts[rows])

    def opened_at(self, row: int):
        """A binary file object positioned at the start of line ``row`` (it may share this file's handle)."""
        offset = int(self.starts[row])
        if isinstance(self.data, FileBytes):
            return self.data.at(offset)
        return io.BytesIO(self.data[offset:])

    def close(self) -> None:
        """Close the file (lines cannot be read afterwards)."""
        if isinstance(self.data, FileBytes):
            self.data.close()


class FileBytes:
    """The bytes of an open binary file, sliced like bytes (``data[low:high]``) without holding them all.

    Short slices are served from a window of WINDOW bytes read at once, so
    that reading lines one after another costs one read per window.
    """

    WINDOW = 1 << 16

    def __init__(self, handle):
        self._handle = handle
        self._size = handle.seek(0, 2)
        self._low, self._window = 0, b""

    def __len__(self) -> int:
        return self._size

    def __getitem__(self, key: slice) -> bytes:
        low, high, _ = key.indices(self._size)
        high = max(low, high)
        if not (self._low <= low and high <= self._low + len(self._window)):
            if high - low > self.WINDOW // 4:
                return self._read(low, high)
            self._low, self._window = low, self._read(low, low + self.WINDOW)
        return self._window[low - self._low : high - self._low]

    def at(self, offset: int):
        """The file's handle, positioned at ``offset`` (slicing positions it anew each time)."""
        self._handle.seek(offset)
        return self._handle

    def _read(self, low: int, high: int) -> bytes:
        self._handle.seek(low)
        return self._handle.read(high - low)

    def close(self) -> None:
        self._handle.close()


def _index(data, begin: int, watch=None):
    """(starts, line-end lengths, text, digit) of every line of ``data[begin:]``, chunk by chunk."""
    parts, position, size = [], begin, len(data)
    while True:
        piece, final = _whole_lines(data, position, size)
        if watch is not None:
            watch(piece)
        parts.append(_index_piece(piece, position, final))
        position += len(piece)
        if final:
            break
    columns = [list(column) for column in zip(*parts)]
    del parts
    return tuple(_joined(column) for column in columns)


def _joined(arrays: list[np.ndarray]) -> np.ndarray:
    """One array from the pieces' arrays, freeing them as it goes (peak: the result and one piece)."""
    joined = np.empty(sum(a.size for a in arrays), dtype=arrays[0].dtype)
    at = 0
    while arrays:
        a = arrays.pop(0)
        joined[at : at + a.size] = a
        at += a.size
    return joined


def _whole_lines(data, position: int, size: int) -> tuple[bytes, bool]:
    """About CHUNK bytes from ``position`` that end with a line end (or the end of the file)."""
    length = CHUNK
    while True:
        stop = min(position + length, size)
        piece = data[position:stop]
        if stop == size:
            return piece, True
        # a CR as the last byte may be the first half of a CRLF: cut before it
        cut = max(piece.rfind(b"\n"), piece.rfind(b"\r", 0, len(piece) - 1)) + 1
        if cut:
            return piece[:cut], False
        length *= 2


def _index_piece(piece: bytes, offset: int, final: bool):
    codes = np.frombuffer(piece, dtype=np.uint8)
    ends = np.flatnonzero(codes == 10)
    if b"\r" in piece:
        ends = _line_ends_with_cr(codes, ends)
    starts = np.concatenate(([0], ends + 1))
    if final:
        ends = np.append(ends, codes.size)
    else:
        starts = starts[:-1]
    if ends.size and b"\r" in piece:  # the text of a CRLF line stops before its CR
        before = codes[np.maximum(ends - 1, 0)]
        ends = ends - ((ends < codes.size) & (ends > 0) & (before == 13) & (codes[np.minimum(ends, codes.size - 1)] == 10))
    flags = np.zeros(starts.size, dtype=np.uint8)
    filled = starts < codes.size  # only a last, empty line starts at the end
    if filled.any():
        classes = np.frombuffer(piece.translate(_CLASSES), dtype=np.uint8)
        flags[filled] = np.bitwise_or.reduceat(classes, starts[filled])
    following = np.append(starts[1:], codes.size)
    return starts + offset, (following - ends).astype(np.uint8), (flags & _TEXT) > 0, (flags & _DIGIT) > 0


def _line_ends_with_cr(codes: np.ndarray, newlines: np.ndarray) -> np.ndarray:
    """Offsets of the line ends: every LF, and every CR not followed by an LF."""
    cr = np.flatnonzero(codes == 13)
    following = np.minimum(cr + 1, codes.size - 1)
    lone = cr[(cr + 1 == codes.size) | (codes[following] != 10)]
    return np.union1d(newlines, lone)
