"""CSV records that remember their exact text, so a drawer file saves back byte for byte.

The standard `csv` module gives cells but forgets how they were spelled (quotes,
spaces, line endings).  Here every record keeps its raw text and where each cell
sits in it; a changed cell is spliced into that text and nothing else moves.
Quoting follows RFC 4180 (double quotes, `""` inside), leniently: a quote may
follow leading spaces, and a quote left open is reported, not fatal.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

DELIMITERS = (",", ";", "\t")
_BREAK = re.compile(r"\r\n|\r|\n")
BOM = "\ufeff"


@dataclass
class Record:
    """One CSV record.  `line` is its first physical line in the file (1-based)."""

    line: int
    raw: str                                     # exact text, terminator included
    cells: list[str]                             # unquoted cell values
    spans: list[tuple[int, int]]                 # where each cell sits in `raw`
    newline: str                                 # '\n', '\r\n', '\r' or '' at end of file
    broken: tuple[int, str] | None = None        # (column, message) when quoting is broken

    @property
    def blank(self) -> bool:
        """Nothing but delimiters and spaces (spreadsheets leave such rows behind)."""
        return all(not c.strip() for c in self.cells)


def sniff_delimiter(text: str) -> str:
    """The delimiter of the header line: the most frequent of , ; TAB outside quotes.

    Spreadsheets in many locales save with ';' because ',' is their decimal mark.
    """
    first = _BREAK.split(text, maxsplit=1)[0]
    unquoted = re.sub(r'"[^"]*"', "", first)
    counts = {d: unquoted.count(d) for d in DELIMITERS}
    best = max(DELIMITERS, key=lambda d: counts[d])
    return best if counts[best] else ","


def _plain_cells(text: str, base: int, delimiter: str) -> tuple[list[str], list[tuple[int, int]]]:
    """Cells of a line read with no quoting at all (the fallback for a broken quote)."""
    cells, spans, start = [], [], 0
    for part in text.split(delimiter):
        cells.append(part)
        spans.append((base + start, base + start + len(part)))
        start += len(part) + 1
    return cells, spans


def split_records(text: str, delimiter: str, first_line: int = 1) -> list[Record]:
    """Cut `text` into records, keeping every character in exactly one record's raw text."""
    records: list[Record] = []
    n, pos, line = len(text), 0, first_line
    stops = delimiter + "\r\n"
    plain = re.compile(f"[^{re.escape(stops)}]*")  # an unquoted cell runs to the next stop
    while pos < n:
        # Fast path: a physical line without quotes is split on the delimiter (most lines of most files).
        m = _BREAK.search(text, pos)
        stop = m.start() if m else n
        if text.find('"', pos, stop) < 0:
            newline = m.group() if m else ""
            body = text[pos:stop]
            cells = body.split(delimiter)
            spans, start = [], 0
            for c in cells:
                spans.append((start, start + len(c)))
                start += len(c) + 1
            records.append(Record(line, body + newline, cells, spans, newline))
            line += 1 if newline else 0
            pos = stop + len(newline)
            continue
        cells: list[str] = []
        spans: list[tuple[int, int]] = []
        broken: tuple[int, str] | None = None
        i = pos
        while True:
            j = i
            while j < n and text[j] in " \t" and text[j] != delimiter:
                j += 1
            if j < n and text[j] == '"':
                value, end, trouble = _quoted(text, j, plain)
                if end < 0:  # never closed: read this one physical line without quoting
                    m = _BREAK.search(text, pos)
                    stop = m.start() if m else n
                    c2, s2 = _plain_cells(text[pos:stop], 0, delimiter)
                    cells, spans, end = c2, s2, stop
                    broken = (_column_of(s2, j - pos), "a quote opened here is never closed")
                    break
                if trouble and broken is None:
                    broken = (len(cells) + 1, trouble)
            else:
                end = plain.match(text, j).end()
                value = text[i:end]
            cells.append(value)
            spans.append((i - pos, end - pos))
            if end < n and text[end] == delimiter:
                i = end + 1
                continue
            break
        newline = "\r\n" if text.startswith("\r\n", end) else (text[end] if end < n else "")
        stop = end + len(newline)
        rec = Record(line, text[pos:stop], cells, spans, newline, broken)
        records.append(rec)
        line += len(_BREAK.findall(rec.raw))
        pos = stop
    return records


def _column_of(spans: list[tuple[int, int]], offset: int) -> int:
    for k, (a, b) in enumerate(spans, start=1):
        if a <= offset <= b:
            return k
    return len(spans) or 1


def _quoted(text: str, j: int, plain: re.Pattern) -> tuple[str, int, str | None]:
    """Read a quoted cell whose opening quote is at `j`: (value, end offset or -1, trouble)."""
    parts, k = [], j + 1
    while True:
        q = text.find('"', k)
        if q < 0:
            return "", -1, None
        parts.append(text[k:q])
        if text.startswith('""', q):
            parts.append('"')
            k = q + 2
            continue
        k = q + 1
        break
    end = plain.match(text, k).end()
    trailing = text[k:end]
    trouble = f'text {trailing.strip()!r} follows a closing quote' if trailing.strip() else None
    return "".join(parts) + trailing.rstrip(), end, trouble


def quote_cell(value: str, delimiter: str) -> str:
    """A cell as it should be written: quoted only when it has to be."""
    if any(ch in value for ch in (delimiter, '"', "\r", "\n")) or value != value.strip():
        return '"' + value.replace('"', '""') + '"'
    return value


def _respell(old_raw: str, value: str, delimiter: str) -> str:
    """New text for a cell, keeping the old cell's padding and quoting style."""
    stripped = old_raw.strip()
    lead = old_raw[: len(old_raw) - len(old_raw.lstrip())]
    trail = old_raw[len(old_raw.rstrip()):]
    if stripped.startswith('"'):
        return lead + '"' + value.replace('"', '""') + '"' + trail
    return lead + quote_cell(value, delimiter) + trail


def with_cell(rec: Record, index: int, value: str, delimiter: str) -> Record:
    """A copy of `rec` with cell `index` (0-based) set to `value`; every other byte kept."""
    body = rec.raw[: len(rec.raw) - len(rec.newline)]
    if index < len(rec.cells):
        a, b = rec.spans[index]
        body = body[:a] + _respell(body[a:b], value, delimiter) + body[b:]
    else:
        body += delimiter * (index - len(rec.cells) + 1) + quote_cell(value, delimiter)
    out = split_records(body + rec.newline, delimiter, rec.line)
    return out[0] if len(out) == 1 else rec


def make_raw(cells: list[str], delimiter: str, newline: str) -> str:
    """A new record's text in the file's own dialect."""
    return delimiter.join(quote_cell(c, delimiter) for c in cells) + newline


@dataclass
class Decoded:
    text: str
    bom: bool
    trouble: str | None = None                   # a whole-file problem (UTF-16, NUL bytes)


def decode(data: bytes) -> Decoded:
    """UTF-8 text, undecodable bytes kept as surrogates so they save back unchanged."""
    trouble = None
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        trouble = "the file is UTF-16; save it as 'CSV UTF-8' instead"
    elif b"\x00" in data:
        trouble = "the file holds NUL bytes; it does not look like a CSV text file"
    elif _CONTROL.search(data):
        trouble = "the file holds control bytes; it does not look like a CSV text file"
    bom = data.startswith(b"\xef\xbb\xbf")
    text = data[3 if bom else 0:].decode("utf-8", errors="surrogateescape")
    if trouble is None:
        bad = len(_SURROGATE.findall(text))
        if bad > max(8, len(data) // 100):  # a stray accented letter is a line's problem; this is not text
            trouble = f"{bad} bytes are not UTF-8; save the file as 'CSV UTF-8'"
    return Decoded(text, bom, trouble)


# C0 controls other than TAB, LF, VT, FF, CR (and DEL): no CSV text holds them, binary files do.
_CONTROL = re.compile(rb"[\x01-\x08\x0e-\x1f\x7f]")
_SURROGATE = re.compile("[\udc80-\udcff]")


def encode(text: str, bom: bool) -> bytes:
    return (b"\xef\xbb\xbf" if bom else b"") + text.encode("utf-8", errors="surrogateescape")


def bad_byte(text: str) -> int | None:
    """The first byte that was not UTF-8 (kept as a lone surrogate by `decode`), if any."""
    m = re.search("[\udc80-\udcff]", text)
    return ord(m.group()) - 0xDC00 if m else None
