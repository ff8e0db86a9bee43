"""Input records for bulk runs, read lazily one at a time from a file or standard input.

Kinds of input (chosen by the file extension, or by `layout` for '-' and unknown extensions):
  smiles   one structure a line, `SMILES [name]` (.smi, .smiles, .rsmi, .txt); blank lines and lines
           starting with '#' are skipped, and so is a first line whose first word is "smiles" (a header)
  sdf      every record up to each `$$$$` line (.sdf, .sd, .mol); the name is the title (first) line
  csv/tsv  the structure column chosen by `column` (default "smiles"), the name from `name_column` or the
           first of name/id/title/compound present (.csv, .tsv)
A line whose structure has two '>' separators (`reactants>agents>products`) is a reaction record.

Nothing holds more than one record in memory; a record longer than MAX_RECORD_CHARS is returned as a
fault without being kept.
"""
from __future__ import annotations

import csv
import io
import itertools
import os
import sys
from dataclasses import dataclass
from typing import Iterable, Iterator, TextIO

from .errors import InputError

MAX_RECORD_CHARS = 5_000_000
LAYOUTS = ("smiles", "sdf", "csv", "tsv")
_EXTENSIONS = {".smi": "smiles", ".smiles": "smiles", ".rsmi": "smiles", ".txt": "smiles",
               ".sdf": "sdf", ".sd": "sdf", ".mol": "sdf", ".csv": "csv", ".tsv": "tsv"}
_NAME_COLUMNS = ("name", "id", "title", "compound")


@dataclass(frozen=True)
class Record:
    """One input record: `number` counts records from 1; `kind` is "smiles", "mol" or "reaction".

    `fault` is non-empty when the record could not even be read (its text is then not analysed).
    """

    number: int
    name: str
    text: str
    kind: str
    fault: str = ""


def layout_of(path: str) -> str | None:
    """The input layout implied by a file name, or None when the extension says nothing."""
    return _EXTENSIONS.get(os.path.splitext(path)[1].lower())


def read_records(source, layout: str | None = None, column: str = "smiles",
                 name_column: str | None = None) -> Iterator[Record]:
    """Yield the records of `source` (a path, '-' for standard input, or an open text stream) in order."""
    if layout is not None and layout not in LAYOUTS:
        raise InputError(f"input layout {layout!r}: choose one of {', '.join(LAYOUTS)}")
    if isinstance(source, str) and source != "-":
        if not os.path.isfile(source):
            raise InputError(f"{source}: file not found")
        layout = layout or layout_of(source)
        stream = open(source, encoding="utf-8", errors="surrogateescape", newline="")
        return _closing(_dispatch(stream, layout, column, name_column, source), stream)
    if source == "-":
        stream = io.TextIOWrapper(sys.stdin.buffer, encoding="utf-8", errors="surrogateescape", newline="")
        label = "stdin"
    else:
        stream, label = source, getattr(source, "name", "input")
    return _dispatch(stream, layout, column, name_column, label)


def count_records(path: str, layout: str | None = None) -> int | None:
    """Fast upper estimate of the number of records in a file (for a progress bar), or None."""
    layout = layout or layout_of(path)
    if layout is None or path == "-" or not os.path.isfile(path):
        return None
    n = 0
    with open(path, "rb") as fh:
        if layout == "sdf":
            n = sum(1 for line in fh if line.startswith(b"$$$$"))
        else:
            n = sum(1 for line in fh if line.strip() and not line.startswith(b"#"))
            if layout in ("csv", "tsv"):
                n -= 1
    return max(n, 0)


def _closing(gen: Iterator[Record], stream: TextIO) -> Iterator[Record]:
    try:
        yield from gen
    finally:
        stream.close()


def _dispatch(stream: TextIO, layout, column, name_column, label) -> Iterator[Record]:
    lines = iter(stream)
    if layout is None:
        head = list(itertools.islice(lines, 400))
        layout = _sniff(head, column)
        lines = itertools.chain(head, lines)
    if layout == "sdf":
        return _sdf_records(lines)
    if layout in ("csv", "tsv"):
        return _table_records(lines, "\t" if layout == "tsv" else ",", column, name_column, label)
    return _smiles_records(lines)


def _sniff(head: list[str], column: str) -> str:
    """Guess the layout of text without a telling extension: MOL blocks, a table with the column, or SMILES."""
    if any(("M  END" in ln or "V2000" in ln or "V3000" in ln or ln.startswith("$$$$")) for ln in head):
        return "sdf"
    first = next((ln for ln in head if ln.strip()), "")
    for layout, sep in (("tsv", "\t"), ("csv", ",")):
        cells = [c.strip().strip('"').lower() for c in first.split(sep)]
        if len(cells) > 1 and column.lower() in cells:
            return layout
    return "smiles"


def _kind(text: str) -> str:
    """'>' never occurs in a SMILES, so a structure holding one is (possibly malformed) reaction SMILES."""
    return "reaction" if ">" in text.split()[0] else "smiles"


def _text_fault(text: str) -> str:
    if "\x00" in text:
        return "binary data, not a structure"
    try:
        text.encode("utf-8")
    except UnicodeEncodeError:
        return "not UTF-8 text"
    return ""


def _smiles_records(lines: Iterable[str]) -> Iterator[Record]:
    number = 0
    first = True
    for line in lines:
        stripped = line.strip()
        if not stripped or stripped.startswith("#"):
            continue
        parts = stripped.split(None, 1)
        if first and parts[0].lower() == "smiles":
            first = False
            continue
        first = False
        number += 1
        if len(stripped) > MAX_RECORD_CHARS:
            yield Record(number, f"record {number}", "", "smiles", "line too long to be a structure")
            continue
        name = parts[1].strip() if len(parts) > 1 else f"record {number}"
        yield Record(number, name, parts[0], _kind(parts[0]), _text_fault(stripped))


def _sdf_records(lines: Iterable[str]) -> Iterator[Record]:
    number = 0
    buf: list[str] = []
    size = 0
    too_long = False
    for line in lines:
        if line.startswith("$$$$"):
            number += 1
            yield _sdf_record(number, buf, too_long)
            buf, size, too_long = [], 0, False
            continue
        if too_long:
            continue
        size += len(line)
        if size > MAX_RECORD_CHARS:
            too_long, buf = True, buf[:1]
            continue
        buf.append(line)
    if too_long or any(ln.strip() for ln in buf):
        yield _sdf_record(number + 1, buf, too_long)


def _sdf_record(number: int, buf: list[str], too_long: bool) -> Record:
    title = buf[0].strip() if buf else ""
    name = title or f"record {number}"
    if too_long:
        return Record(number, name, "", "mol", "record too long to be a structure")
    text = "".join(buf)
    fault = _text_fault(text)
    if not fault and "M  END" not in text:
        fault = "SDF record without an 'M  END' line" if text.strip() else "empty SDF record"
    return Record(number, name, text, "mol", fault)


def _table_records(lines: Iterable[str], sep: str, column: str, name_column, label) -> Iterator[Record]:
    csv.field_size_limit(max(csv.field_size_limit(), MAX_RECORD_CHARS + 1))
    reader = csv.reader(lines, delimiter=sep)
    try:
        header = next(reader, None)
    except csv.Error as exc:
        raise InputError(f"{label}: header line cannot be read as {'TSV' if sep == chr(9) else 'CSV'} "
                         f"({exc})") from None
    if header is None:
        return
    lower = [h.strip().lower() for h in header]
    if column.lower() not in lower:
        raise InputError(f"{label}: no column {column!r} in the header ({', '.join(header)[:200]}); "
                         f"choose the structure column with --column")
    col = lower.index(column.lower())
    if name_column is not None:
        if name_column.lower() not in lower:
            raise InputError(f"{label}: no name column {name_column!r} in the header")
        name_col = lower.index(name_column.lower())
    else:
        name_col = next((lower.index(c) for c in _NAME_COLUMNS if c in lower), None)
    number = 0
    while True:
        try:
            row = next(reader)
        except StopIteration:
            return
        except csv.Error as exc:
            number += 1
            yield Record(number, f"record {number}", "", "smiles", f"row cannot be read ({exc})")
            continue
        if not any(cell.strip() for cell in row):
            continue
        number += 1
        name = row[name_col].strip() if name_col is not None and name_col < len(row) else ""
        name = name or f"record {number}"
        if col >= len(row) or not row[col].strip():
            yield Record(number, name, "", "smiles", f"no structure in column {header[col]!r}")
            continue
        text = row[col].strip()
        if len(text) > MAX_RECORD_CHARS:
            yield Record(number, name, "", "smiles", "cell too long to be a structure")
            continue
        kind = "mol" if "M  END" in text else _kind(text)
        yield Record(number, name, text, kind, _text_fault(text))
