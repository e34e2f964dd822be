"""Reading a data file read-only and decoding it to text lines.

Encodings tried, in order: a byte-order mark (UTF-8, UTF-16, UTF-32), UTF-16
without a mark (recognised by its zero bytes), strict UTF-8, cp1252 (the
Windows code page most exports use for °, µ and ·), and Latin-1, which
decodes any byte.  Files that are not text (spreadsheets, images, native
instrument files) are refused with a hint to export them as text.

The file stays open for reading and is checked in chunks, so that a large
export is never held in memory as a whole; UTF-16 and UTF-32 files are
converted to UTF-8 in memory.
"""

from __future__ import annotations

import codecs
import io
import re
import unicodedata
from pathlib import Path

from rheofit.errors import InputFileError
from rheofit.ingest.lines import CHUNK, FileBytes, Lines

_BOMS = (
    (codecs.BOM_UTF32_LE, "utf-32"),
    (codecs.BOM_UTF32_BE, "utf-32"),
    (codecs.BOM_UTF8, "utf-8-sig"),
    (codecs.BOM_UTF16_LE, "utf-16"),
    (codecs.BOM_UTF16_BE, "utf-16"),
)

#: leading bytes of common non-text files -> what they are
_SIGNATURES = {
    b"PK\x03\x04": "a zip archive (a spreadsheet workbook?)",
    b"\xd0\xcf\x11\xe0": "an office document (an old spreadsheet?)",
    b"%PDF": "a PDF document",
    b"\x89PNG": "a PNG image",
    b"\xff\xd8\xff": "a JPEG image",
    b"\x89HDF": "an HDF5 file",
    b"SQLite format 3": "an SQLite database",
}

_TEXT_CONTROLS = set(b"\t\n\r\f\x1a")
#: a byte that is not blank (a file with none is empty)
_FILLED = re.compile(b"[^ \t\r\n\x00" + re.escape(codecs.BOM_UTF8) + b"]")
#: encodings read as UTF-8 in memory (the others keep every ASCII character as its own byte)
_WIDE = ("utf-16", "utf-32", "utf-16-le", "utf-16-be")


def read_lines(path: Path, shown: str) -> tuple[Lines, str]:
    """Lines of ``path`` (without line ends) and the encoding used.

    ``shown`` is how the file is named in error messages.  The file is only
    opened for reading, in binary mode; close the lines when done with them.
    """
    data = _contents(path, shown)
    try:
        return _decoded(data, shown)
    except BaseException:
        data.close()
        raise


def _decoded(data: FileBytes, shown: str) -> tuple[Lines, str]:
    if not any(_FILLED.search(data[low : low + CHUNK]) for low in range(0, len(data), CHUNK)):
        raise InputFileError(f"File '{shown}' is empty; export the sweep again or pick another file.")
    encoding = _marked_encoding(data, shown)
    if encoding in _WIDE:  # UTF-16/32: to UTF-8, so that line ends and digits are single bytes
        try:
            text = data[:].decode(encoding)
        except UnicodeDecodeError:
            raise _undecodable(shown, encoding) from None
        data.close()
        if not _textual(text[:4096]):
            raise _binary(shown, "binary data")
        return Lines(text.lstrip("\ufeff").encode("utf-8", "surrogatepass"), "utf-8"), encoding
    begin = 0
    while encoding and data[begin : begin + 3] == codecs.BOM_UTF8:
        begin += 3
    decodes = _Decodes([encoding] if encoding else ["utf-8", "cp1252"])
    lines = Lines(data, "latin-1", begin, watch=decodes)  # checked while the lines are found
    found = decodes.first()
    if encoding and not found:
        raise _undecodable(shown, encoding)
    encoding = found or "latin-1"
    if not _textual(_head(data, encoding)):
        raise _binary(shown, "binary data")
    lines.codec = "utf-8" if encoding.startswith("utf-8") else encoding
    return lines, encoding


def _contents(path: Path, shown: str) -> FileBytes:
    """The file, opened for reading (close it when done)."""
    try:
        handle = open(path, "rb")
        if not handle.seekable():  # a pipe: read it whole
            with handle:
                handle = io.BytesIO(handle.read())
        return FileBytes(handle)
    except FileNotFoundError:
        raise InputFileError(f"File '{shown}' does not exist; check the path and the file name.") from None
    except IsADirectoryError:
        raise InputFileError(f"'{shown}' is a folder, not a data file; give the path of one exported file.") from None
    except PermissionError:
        raise InputFileError(f"File '{shown}' cannot be opened (permission denied); copy it somewhere readable.") from None


def _marked_encoding(data, shown: str) -> str | None:
    """The encoding a byte-order mark or zero bytes show; None for UTF-8, cp1252 or Latin-1 (told by decoding).

    InputFileError when the file is not text.
    """
    head = data[:4096]
    for bom, name in _BOMS:
        if head.startswith(bom):
            return name
    for signature, what in _SIGNATURES.items():
        if head.startswith(signature):
            raise _binary(shown, what)
    if b"\x00" in head:
        return _utf16_without_bom(head, shown)
    controls = sum(1 for byte in head if byte < 32 and byte not in _TEXT_CONTROLS)
    if controls > 0.05 * len(head):
        raise _binary(shown, "binary data")
    return None


class _Decodes:
    """Which of some ASCII-compatible encodings decode all the pieces of a file fed to it, in order."""

    def __init__(self, encodings: list[str]):
        self._decoders = {name: codecs.getincrementaldecoder(name)() for name in encodings}

    def __call__(self, piece: bytes) -> None:
        ascii_only = piece.isascii()
        for name, decoder in list(self._decoders.items()):
            if ascii_only and not decoder.getstate()[0]:
                continue  # decodes, in every one of these encodings
            try:
                decoder.decode(piece)
            except UnicodeDecodeError:
                del self._decoders[name]

    def first(self) -> str | None:
        """The first encoding that decoded everything (call after the last piece)."""
        for name, decoder in self._decoders.items():
            try:
                decoder.decode(b"", final=True)
                return name
            except UnicodeDecodeError:
                continue
        return None


def _head(data, encoding: str, length: int = 4096) -> str:
    """The first ``length`` characters of the decoded text (``data`` is known to decode)."""
    size = 4 * length + 4  # enough bytes for ``length`` characters in any of the encodings
    return codecs.getincrementaldecoder(encoding)().decode(data[:size], final=len(data) <= size)[:length]


def _textual(head: str) -> bool:
    """Few control, unassigned or private-use characters: real text."""
    odd = sum(1 for ch in head if ch not in "\t\n\r\f\x1a" and unicodedata.category(ch) in ("Cc", "Cn", "Co", "Cs"))
    return odd <= 0.05 * max(1, len(head))


def _utf16_without_bom(head: bytes, shown: str) -> str:
    """'utf-16-le' / 'utf-16-be' when zero bytes sit on one side of each pair."""
    even = head[0::2].count(0) / max(1, len(head[0::2]))
    odd = head[1::2].count(0) / max(1, len(head[1::2]))
    if odd > 0.3 and even < 0.05:
        return "utf-16-le"
    if even > 0.3 and odd < 0.05:
        return "utf-16-be"
    raise _binary(shown, "binary data")


def _undecodable(shown: str, encoding: str) -> InputFileError:
    return _binary(shown, f"binary data (it starts like {encoding} text but does not decode)")


def _binary(shown: str, what: str) -> InputFileError:
    return InputFileError(
        f"File '{shown}' is not a text file but {what}; export the sweep as text "
        "(CSV or tab-separated) and read that file."
    )
