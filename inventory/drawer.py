"""The drawer file read whole: parts with SI values, every problem at once, exact text kept.

A line with an error is left out of `.parts` but stays in `.records` byte for byte, so
saving never loses what the user typed.  `to_bytes()` of an unchanged drawer returns the
file as it was read.
"""

from __future__ import annotations

import difflib
import gc
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from . import csvfile
from .csvfile import Record
from .parts import Part
from .problems import Problem, one_of, shown
from .rows import COLUMNS, REQUIRED, RowReader, identity_key, read_row


@dataclass(frozen=True)
class ResistorStock:
    """In-stock resistor lines as arrays (one entry per drawer line with qty > 0)."""

    line: np.ndarray        # int, drawer line number
    ohms: np.ndarray        # float, Ω
    tolerance: np.ndarray   # float, fraction (0.05 = 5 %)
    power_w: np.ndarray     # float, W
    qty: np.ndarray         # int

    def __len__(self) -> int:
        return len(self.line)


@dataclass(frozen=True)
class CapacitorStock:
    """In-stock capacitor lines as arrays; voltage_v is NaN where the file gives no rating."""

    line: np.ndarray        # int
    farads: np.ndarray      # float, F
    tolerance: np.ndarray   # float, fraction
    voltage_v: np.ndarray   # float, V (NaN = unknown)
    polarised: np.ndarray   # bool: electrolytic or tantalum
    qty: np.ndarray         # int

    def __len__(self) -> int:
        return len(self.line)


@dataclass(frozen=True)
class Dialect:
    """How the file is written, so new lines match it."""

    delimiter: str = ","
    newline: str = "\n"
    bom: bool = False


class Drawer:
    """A parsed drawer file.  Build it with `Drawer.load(path)` or `Drawer.parse(text, path)`."""

    def __init__(self, path: str, records: list[Record], dialect: Dialect, header: int | None,
                 columns: dict[str, int], parts: list[Part], problems: list[Problem]) -> None:
        self.path = path
        self.records = records          # every record, blank and broken ones too, in file order
        self.dialect = dialect
        self.header = header            # index into records of the header, None if there is none
        self.columns = columns          # column name -> 0-based cell index
        self.parts = parts
        self.problems = problems
        self.trouble: str | None = None  # a whole-file problem (not UTF-8 text): nothing may be written
        self._by_line = {p.line: p for p in parts}
        self._by_key: dict[tuple, list[Part]] | None = None
        self._index: dict[int, int] | None = None

    # ---- reading -------------------------------------------------------------------------

    @classmethod
    def load(cls, path: str | Path) -> Drawer:
        """Read and check the file (OSError when it cannot be read; see `.trouble` for a file that is not text)."""
        return cls.from_bytes(Path(path).read_bytes(), str(path))

    @classmethod
    def parse(cls, text: str | bytes, path: str = "drawer.csv") -> Drawer:
        if isinstance(text, bytes):
            return cls.from_bytes(text, path)
        bom = text.startswith(csvfile.BOM)
        return cls._build(text[1:] if bom else text, bom, None, str(path))

    @classmethod
    def from_bytes(cls, data: bytes, path: str = "drawer.csv") -> Drawer:
        d = csvfile.decode(data)
        return cls._build(d.text, d.bom, d.trouble, str(path))

    @classmethod
    def _build(cls, text: str, bom: bool, trouble: str | None, path: str) -> Drawer:
        # The records and parts hold no reference cycles; the cyclic collector, run again and again
        # over the growing heap while they are made, tripled the time of a large file.
        was = gc.isenabled()
        gc.disable()
        try:
            return cls._build_records(text, bom, trouble, path)
        finally:
            if was:
                gc.enable()

    @classmethod
    def _build_records(cls, text: str, bom: bool, trouble: str | None, path: str) -> Drawer:
        delimiter = csvfile.sniff_delimiter(text)
        records = csvfile.split_records(text, delimiter)
        header = next((i for i, r in enumerate(records) if not r.blank), None)
        newline = (records[header].newline if header is not None else "") or "\n"
        dialect = Dialect(delimiter, newline, bom)
        problems: list[Problem] = []
        if trouble:
            problems.append(Problem(path, 1, 1, "", trouble))
            drawer = cls(path, records, dialect, header, {}, [], problems)
            drawer.trouble = trouble
            return drawer
        if header is None:
            problems.append(Problem(path, 1, 1, "", "the file is empty (expected a header line "
                                    "such as kind,value,qty,tolerance,location)"))
            return cls(path, records, dialect, header, {}, [], problems)
        columns = _read_header(path, records[header], problems)
        parts: list[Part] = []
        if all(name in columns for name in REQUIRED):
            for rec in records[header + 1:]:
                part = _read_record(path, rec, columns, delimiter, len(records[header].cells), problems)
                if part is not None:
                    parts.append(part)
            _warn_duplicates(path, parts, problems)
        problems.sort(key=lambda p: (p.line, p.column))
        return cls(path, records, dialect, header, columns, parts, problems)

    # ---- the model -----------------------------------------------------------------------

    @property
    def errors(self) -> list[Problem]:
        return [p for p in self.problems if p.is_error]

    @property
    def warnings(self) -> list[Problem]:
        return [p for p in self.problems if not p.is_error]

    def header_fault(self) -> str | None:
        """Why the header line is no drawer file's header, worded to follow "the header" ("has no qty column",
        "opens a quote that is never closed"), or None; None too for a file with no header line at all (an
        empty file: `add` starts one)."""
        if self.header is None:
            return None
        rec = self.records[self.header]
        if rec.broken:
            return "opens a quote that is never closed"
        missing = [name for name in REQUIRED if name not in self.columns]
        return f"has no {one_of(missing)} column" if missing else None

    def part_at(self, line: int) -> Part | None:
        """The valid part on `line` (the record's first physical line), or None."""
        return self._by_line.get(line)

    def record_index(self, line: int) -> int | None:
        """Index into `.records` of the data record starting on `line`."""
        if self._index is None:  # built on first use: a large file is looked up many times
            self._index = {}
            if self.header is not None:
                for i in range(self.header + 1, len(self.records)):
                    rec = self.records[i]
                    if not rec.blank:
                        self._index.setdefault(rec.line, i)
        return self._index.get(line)

    def find(self, key: tuple) -> list[Part]:
        """Parts whose identity_key(identity) equals `key` (an index built on first use)."""
        if self._by_key is None:
            self._by_key = {}
            for p in self.parts:
                self._by_key.setdefault(identity_key(p.identity), []).append(p)
        return list(self._by_key.get(key, ()))

    def resistor_stock(self) -> ResistorStock:
        # A 0R link is a legal part but no resistance: it never goes into a resistor network.
        rs = [p for p in self.parts if p.kind == "resistor" and p.qty > 0 and p.value > 0]
        return ResistorStock(
            line=np.array([p.line for p in rs], dtype=np.int64),
            ohms=np.array([p.value for p in rs], dtype=float),
            tolerance=np.array([p.tolerance for p in rs], dtype=float),
            power_w=np.array([p.power_w for p in rs], dtype=float),
            qty=np.array([p.qty for p in rs], dtype=np.int64),
        )

    def capacitor_stock(self) -> CapacitorStock:
        cs = [p for p in self.parts if p.kind == "capacitor" and p.qty > 0]
        return CapacitorStock(
            line=np.array([p.line for p in cs], dtype=np.int64),
            farads=np.array([p.value for p in cs], dtype=float),
            tolerance=np.array([p.tolerance for p in cs], dtype=float),
            voltage_v=np.array([np.nan if p.voltage_v is None else p.voltage_v for p in cs], dtype=float),
            polarised=np.array([p.polarised for p in cs], dtype=bool),
            qty=np.array([p.qty for p in cs], dtype=np.int64),
        )

    def transistors(self) -> list[Part]:
        return [p for p in self.parts if p.kind == "transistor" and p.qty > 0]

    def text(self) -> str:
        return "".join(r.raw for r in self.records)

    def to_bytes(self) -> bytes:
        return csvfile.encode(self.text(), self.dialect.bom)


def _read_header(path: str, rec: Record, problems: list[Problem]) -> dict[str, int]:
    columns: dict[str, int] = {}
    for i, cell in enumerate(rec.cells):
        name = cell.strip().lower()
        if not name:
            continue
        if name in columns:
            problems.append(Problem(path, rec.line, i + 1, cell, f"column {shown(name)} appears twice "
                                    f"(columns {columns[name] + 1} and {i + 1}); the first is read"))
            continue
        columns[name] = i
        if name not in COLUMNS:
            close = difflib.get_close_matches(name, COLUMNS, n=1, cutoff=0.75)
            if close and close[0] not in [c.strip().lower() for c in rec.cells]:
                problems.append(Problem(path, rec.line, i + 1, cell, f"column {shown(cell.strip())} is not "
                                        f"read (did you mean {close[0]}?); it is kept as it is",
                                        "warning"))
    if rec.broken:
        problems.append(Problem(path, rec.line, rec.broken[0], "", rec.broken[1]))
    missing = [name for name in REQUIRED if name not in columns]
    if missing:
        names = one_of(missing)
        problems.append(Problem(path, rec.line, len(rec.cells) + 1, "", f"the header has no {names} "
                                f"column (it needs kind, value and qty; found: {', '.join(columns) or 'nothing'})"))
    return columns


def _read_record(path: str, rec: Record, columns: dict[str, int], delimiter: str, width: int,
                 problems: list[Problem]) -> Part | None:
    if rec.blank:
        return None
    if rec.broken:
        problems.append(Problem(path, rec.line, rec.broken[0], "", rec.broken[1]))
        return None
    bad = csvfile.bad_byte(rec.raw)
    if bad is not None:
        col = next((i + 1 for i, c in enumerate(rec.cells) if csvfile.bad_byte(c) is not None), 1)
        problems.append(Problem(path, rec.line, col, "", f"byte 0x{bad:02X} is not UTF-8 text; "
                                "save the file as 'CSV UTF-8'"))
        return None
    extra = [i for i in range(width, len(rec.cells)) if rec.cells[i].strip()]
    if extra:
        problems.append(Problem(
            path, rec.line, extra[0] + 1, rec.cells[extra[0]],
            f"line has {len(rec.cells)} cells but the header has {width} "
            f"(a cell holding '{delimiter}' needs double quotes around it)"))
        return None
    reader = RowReader(path, rec.line, rec.cells, columns, decimal_comma=delimiter == ";")
    part = read_row(reader)
    problems.extend(reader.problems)
    return part


def _warn_duplicates(path: str, parts: list[Part], problems: list[Problem]) -> None:
    first: dict[tuple, int] = {}
    for p in parts:
        key = identity_key(p.identity)
        if key in first:
            where = f" in {p.location}" if p.location else ""
            problems.append(Problem(path, p.line, 1, "", f"same {p.kind}{where} as line {first[key]}; "
                                    "the counts are kept apart (merge the lines?)", "warning"))
        else:
            first[key] = p.line
