"""Reading a data file read-only and decoding it to text lines.

Encodings tried, in order: a byte-order mark (UTF-8, UTF-16, UTF-32), UTF-16
without a mark (recognised by its zero bytes), strict UTF-8, cp1252 (the
Windows code page most exports use for °, µ and ·), and Latin-1, which
decodes any byte.  Files that are not text (spreadsheets, images, native
instrument files) are refused with a hint to export them as text.
"""

from __future__ import annotations

import codecs
import unicodedata
from pathlib import Path

from rheofit.errors import InputFileError

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


def read_lines(path: Path, shown: str) -> tuple[list[str], str]:
    """Lines of ``path`` (without line ends) and the encoding used.

    ``shown`` is how the file is named in error messages.  The file is only
    opened for reading, in binary mode.
    """
    data = _read_bytes(path, shown)
    if not data.strip(b" \t\r\n\x00" + codecs.BOM_UTF8):
        raise InputFileError(f"File '{shown}' is empty; export the sweep again or pick another file.")
    encoding = _encoding(data, shown)
    text = data.decode(encoding)
    if not _textual(text[:4096]):
        raise _binary(shown, "binary data")
    text = text.replace("\r\n", "\n").replace("\r", "\n").lstrip("\ufeff")
    return text.split("\n"), encoding


def _read_bytes(path: Path, shown: str) -> bytes:
    try:
        with open(path, "rb") as handle:
            return handle.read()
    except FileNotFoundError:
        raise InputFileError(f"File '{shown}' does not exist; check the path and the file name.") from None
    except IsADirectoryError:
        raise InputFileError(f"'{shown}' is a folder, not a data file; give the path of one exported file.") from None
    except PermissionError:
        raise InputFileError(f"File '{shown}' cannot be opened (permission denied); copy it somewhere readable.") from None


def _encoding(data: bytes, shown: str) -> str:
    """The encoding of ``data``, or InputFileError when it is not text."""
    for bom, name in _BOMS:
        if data.startswith(bom):
            return _checked(data, name, shown)
    for signature, what in _SIGNATURES.items():
        if data.startswith(signature):
            raise _binary(shown, what)
    head = data[:4096]
    if b"\x00" in head:
        return _checked(data, _utf16_without_bom(head, shown), shown)
    controls = sum(1 for byte in head if byte < 32 and byte not in _TEXT_CONTROLS)
    if controls > 0.05 * len(head):
        raise _binary(shown, "binary data")
    for name in ("utf-8", "cp1252"):
        try:
            data.decode(name)
            return name
        except UnicodeDecodeError:
            continue
    return "latin-1"


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


def _checked(data: bytes, encoding: str, shown: str) -> str:
    try:
        data.decode(encoding)
    except UnicodeDecodeError:
        raise _binary(shown, f"binary data (it starts like {encoding} text but does not decode)") from None
    return encoding


def _binary(shown: str, what: str) -> InputFileError:
    return InputFileError(
        f"File '{shown}' is not a text file but {what}; export the sweep as text "
        "(CSV or tab-separated) and read that file."
    )
