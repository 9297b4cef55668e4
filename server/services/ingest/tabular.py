"""Bytes of a delimited text file to a header and rows of strings."""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass

from .report import Problem

DELIMITERS = (",", ";", "\t")


@dataclass(frozen=True)
class Table:
    header: list[str]
    rows: list[list[str]]  # data rows; rows[i] is spreadsheet row i + 2


class TableError(Exception):
    """The file cannot be read as a table at all."""

    def __init__(self, message: str):
        super().__init__(message)
        self.problem = Problem(None, None, None, message)


def decode_text(data: bytes) -> str:
    """UTF-8 (with or without BOM); Windows-1252 as a fallback for legacy exports."""
    if b"\x00" in data:
        raise TableError("the file contains NUL bytes: it is not a text (CSV) file")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        try:
            return data.decode("cp1252")
        except UnicodeDecodeError as exc:
            raise TableError("the file is neither UTF-8 nor Windows-1252 text") from exc


def sniff_delimiter(first_line: str) -> str:
    """The delimiter that splits the header into the most columns."""
    return max(DELIMITERS, key=first_line.count)


def read_csv(data: bytes) -> Table:
    """Parse a CSV/TSV file; the header row is required."""
    text = decode_text(data)
    lines = text.splitlines()
    if not lines or not lines[0].strip():
        raise TableError("the file is empty or its first line (the header) is blank")
    delimiter = sniff_delimiter(lines[0])
    try:
        all_rows = list(csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, strict=True))
    except csv.Error as exc:
        raise TableError(f"the file is not valid delimited text: {exc}") from exc
    header = [h.strip() for h in all_rows[0]]
    rows = [r for r in all_rows[1:]]
    return Table(header=header, rows=rows)
