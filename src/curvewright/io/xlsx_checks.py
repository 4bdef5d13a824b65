"""Checks on a workbook's bytes before the XLSX reader sees them, so that a damaged or hostile file
ends in a clear refusal instead of a crash, a hang or memory exhausted.

An XLSX workbook is a zip archive of XML parts (ECMA-376 Part 2, Open Packaging Conventions). Before
any part is parsed:

- the zip's central directory is located from its end record and its size bounded
  (:data:`MAX_DIRECTORY_BYTES`, :data:`MAX_PARTS`), so that reading the directory itself stays small;
- the uncompressed sizes the directory declares are bounded, part by part and in total
  (:data:`MAX_PART_BYTES`, :data:`MAX_UNCOMPRESSED_BYTES`); the zip reader never inflates a part
  beyond its declared size, so these bounds hold for what is actually read;
- every part is streamed once: one holding a document type declaration (``<!DOCTYPE`` or
  ``<!ENTITY``) is refused, since spreadsheet programs never write them and entities are the way
  to both entity-expansion and external-entity attacks; the XML markup of the shared-string table
  (every string is kept in memory) and of every other part parsed whole is counted and bounded
  (:data:`MAX_SHARED_STRING_MARKUP`, :data:`MAX_PART_MARKUP`). Worksheets are read as a stream;
  the cells taken from them are bounded while reading (:data:`MAX_CELLS`, :data:`MAX_ROWS`).

Each refusal is an :class:`~curvewright.io.errors.ImportProblem` naming the file, the part and the
limit.
"""

from __future__ import annotations

import io
import re
import struct
import zipfile
import zlib

from .errors import ImportProblem

MAX_DIRECTORY_BYTES = 4 * 1024 * 1024
"""Size of the zip's central directory (a workbook's is a few kilobytes)."""
MAX_PARTS = 10_000
"""Parts in the archive (a workbook has tens)."""
MAX_PART_BYTES = 128 * 1024 * 1024
"""Uncompressed size of one part (about 2 million numeric cells in one sheet)."""
MAX_UNCOMPRESSED_BYTES = 256 * 1024 * 1024
"""Uncompressed size of all parts together."""
MAX_SHARED_STRING_MARKUP = 4_000_000
"""XML tags in the shared-string table (about one million strings, each kept in memory)."""
MAX_PART_MARKUP = 500_000
"""XML tags in any other part that is parsed whole (styles, workbook, relationships, charts)."""
MAX_CELLS = 5_000_000
"""Cells taken from one sheet, counting the empty cells that fill a row up to its last cell."""
MAX_ROWS = 1_048_576
"""Rows taken from one sheet: the most a spreadsheet program's sheet holds (from memory)."""

_END = b"PK\x05\x06"
_END64_LOCATOR = b"PK\x06\x07"
_END64 = b"PK\x06\x06"
_CHUNK = 1 << 20
_OVERLAP = 64
_SHEET_DATA = re.compile(rb"<(?:[A-Za-z_][\w.-]{0,31}:)?sheetData[\s/>]")
_STRING_TABLE = re.compile(rb"<(?:[A-Za-z_][\w.-]{0,31}:)?sst[\s/>]")
_DECLARATIONS = (b"<!DOCTYPE", b"<!ENTITY")


def check_workbook(data: bytes, origin: str) -> None:
    """Refuse (with :class:`ImportProblem`) a workbook whose reading could not stay within the
    bounds above, or that holds a document type declaration."""
    _check_directory_size(data, origin)
    try:
        archive = zipfile.ZipFile(io.BytesIO(data))
    except (zipfile.BadZipFile, zipfile.LargeZipFile, ValueError, EOFError, OSError) as exc:
        raise ImportProblem(f"{origin}: not a readable XLSX workbook (not a valid zip archive: {exc}); "
                            "open it in the spreadsheet program and save it again as .xlsx.") from None
    with archive:
        infos = archive.infolist()
        if len(infos) > MAX_PARTS:
            raise ImportProblem(f"{origin}: the workbook has {len(infos):,} parts, more than the {MAX_PARTS:,} "
                                "a workbook to import may have; it is not read.")
        total = 0
        for info in infos:
            if info.flag_bits & 0x1:
                raise ImportProblem(f"{origin}: the workbook is encrypted (part {info.filename}); save it without "
                                    "a password and import it again.")
            if info.file_size > MAX_PART_BYTES:
                raise ImportProblem(
                    f"{origin}: part {info.filename} unpacks to {info.file_size / 1e6:,.0f} MB, more than the "
                    f"{MAX_PART_BYTES / 1e6:.0f} MB one part of a workbook to import may have; it is not read."
                )
            total += info.file_size
        if total > MAX_UNCOMPRESSED_BYTES:
            raise ImportProblem(
                f"{origin}: the workbook unpacks to {total / 1e6:,.0f} MB, more than the "
                f"{MAX_UNCOMPRESSED_BYTES / 1e6:.0f} MB a workbook to import may have; it is not read."
            )
        for info in infos:
            if not info.is_dir():
                _check_part(archive, info, origin)


def _check_directory_size(data: bytes, origin: str) -> None:
    """Bound the central directory from the end record before the zip reader loads it."""
    at = data.rfind(_END, max(0, len(data) - 22 - 0xFFFF))
    if at < 0 or len(data) - at < 22:
        return  # not a zip: the zip reader says so
    entries, size = struct.unpack_from("<xxxxxxxxxxHI", data, at)
    locator = at - 20
    if locator >= 0 and data[locator:locator + 4] == _END64_LOCATOR:
        (offset,) = struct.unpack_from("<Q", data, locator + 8)
        if offset + 56 <= len(data) and data[offset:offset + 4] == _END64:
            entries, size = struct.unpack_from("<QQ", data, offset + 32)
    if entries > MAX_PARTS or size > MAX_DIRECTORY_BYTES:
        raise ImportProblem(f"{origin}: the workbook's zip directory lists {entries:,} parts in {size:,} bytes, more "
                            f"than a workbook to import may have ({MAX_PARTS:,} parts); it is not read.")


def _check_part(archive: zipfile.ZipFile, info: zipfile.ZipInfo, origin: str) -> None:
    markup = 0
    kind = "part"  # "sheet" (streamed by the reader), "strings" (kept in memory) or "part" (parsed whole)
    tail = b""
    try:
        with archive.open(info) as stream:
            while chunk := stream.read(_CHUNK):
                window = tail + chunk
                for declaration in _DECLARATIONS:
                    if declaration in window:
                        raise ImportProblem(
                            f"{origin}: part {info.filename} holds a document type declaration "
                            f"({declaration.decode()}), which spreadsheet programs never write; the workbook is "
                            "not read, for safety. Open it in the spreadsheet program and save it again as .xlsx."
                        )
                if kind == "part":
                    if _SHEET_DATA.search(window):
                        kind = "sheet"
                    elif _STRING_TABLE.search(window):
                        kind = "strings"
                markup += chunk.count(b"<")
                limit = MAX_SHARED_STRING_MARKUP if kind == "strings" else MAX_PART_MARKUP
                if kind != "sheet" and markup > limit:
                    what = "shared-string table" if kind == "strings" else "part"
                    raise ImportProblem(
                        f"{origin}: the {what} {info.filename} holds more than {limit:,} XML tags, more than a "
                        "workbook to import may have; it is not read."
                    )
                tail = window[-_OVERLAP:]
    except ImportProblem:
        raise
    except (zipfile.BadZipFile, zlib.error, NotImplementedError, RuntimeError, ValueError, EOFError, OSError) as exc:
        raise ImportProblem(f"{origin}: not a readable XLSX workbook (part {info.filename} is damaged: {exc}); "
                            "open it in the spreadsheet program and save it again as .xlsx.") from None


def malformed_part(data: bytes) -> str | None:
    """The name of the first XML part of an archive (already passed by :func:`check_workbook`)
    that is not well-formed, to name the place of a failure; None when every part parses. The
    parts are streamed through expat without building a tree."""
    from xml.parsers import expat

    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            for info in archive.infolist():
                if not info.filename.lower().endswith((".xml", ".rels")):
                    continue
                parser = expat.ParserCreate()
                try:
                    with archive.open(info) as stream:
                        while chunk := stream.read(_CHUNK):
                            parser.Parse(chunk, False)
                    parser.Parse(b"", True)
                except expat.ExpatError:
                    return info.filename
    except (zipfile.BadZipFile, zlib.error, NotImplementedError, RuntimeError, ValueError, EOFError, OSError):
        return None
    return None
