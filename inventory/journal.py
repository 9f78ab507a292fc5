"""The change journal: one JSON object per line beside the drawer file, appended, never rewritten.

`drawer.csv` keeps its journal in `drawer.journal.jsonl`.  Each line:

    {"id": 7, "time": "2026-12-01T22:40:03.512Z", "action": "take", "reason": "preamp build",
     "file": "drawer.csv", "undoes": null,
     "changes": [{"line": 14, "index": 13, "identity": ["resistor", 4700.0, 0.05, 0.25, null, ...],
                  "row": {"kind": "resistor", "value": "4k7", ...},
                  "raw_before": "resistor,4k7,10,...\n", "raw_after": "resistor,4k7,8,...\n",
                  "qty_before": 10, "qty_after": 8}]}

action is add, remove, count, take, edit or undo.  For add qty_before/raw_before are null, for
remove qty_after/raw_after are null.  `identity` and `row` describe the line as the change left
it (for a remove: as it was); `identity` is Part.identity, null for a line with errors, which is
then found again by its raw text.  `index` is the record's position in the file, used to put a
removed line back where it was.  Two optional flags: "rewrite": true marks an edit of the whole
line (undo puts raw_before back), "header": true the header line, changed when an added part
needed a column the file lacked.  An undo entry names the entry it reverts in `undoes` and lists
the changes it made, so it can be undone in turn.  Ids count up from 1.

The drawer file is saved before its entry is appended (both under the drawer's lock): a crash
between the two leaves a change without an entry, never an entry for a change not made.  A torn
last line from a crash mid-append is skipped when reading and closed off by the next append.
"""

from __future__ import annotations

import json
from dataclasses import asdict, dataclass, field
from datetime import datetime, timezone
from pathlib import Path

from .atomic import append_durably, fsync_dir

ACTIONS = ("add", "remove", "count", "take", "edit", "undo")


def journal_path(drawer_path: str | Path) -> Path:
    p = Path(drawer_path)
    return p.with_name(p.stem + ".journal.jsonl")


@dataclass
class Change:
    """What happened to one drawer line."""

    line: int
    index: int
    identity: list | None
    row: dict[str, str]
    raw_before: str | None
    raw_after: str | None
    qty_before: int | None
    qty_after: int | None
    header: bool = False    # the header line (a column added for a new part)
    rewrite: bool = False   # the line was edited as a whole: undo puts raw_before back


@dataclass
class Entry:
    id: int
    time: str
    action: str
    reason: str
    file: str
    changes: list[Change] = field(default_factory=list)
    undoes: int | None = None

    def to_json(self) -> dict:
        return asdict(self)

    @classmethod
    def from_json(cls, obj: dict) -> Entry:
        changes = [Change(**c) for c in obj.get("changes", [])]
        return cls(
            id=int(obj["id"]), time=str(obj["time"]), action=str(obj["action"]),
            reason=str(obj.get("reason", "")), file=str(obj.get("file", "")),
            changes=changes, undoes=obj.get("undoes"),
        )


def now_iso() -> str:
    """ISO 8601 UTC with milliseconds and a Z."""
    return datetime.now(timezone.utc).isoformat(timespec="milliseconds").replace("+00:00", "Z")


class Journal:
    def __init__(self, path: str | Path) -> None:
        self.path = Path(path)

    def read(self) -> list[Entry]:
        """Every readable entry in order; torn or damaged lines are skipped."""
        try:
            data = self.path.read_bytes()
        except FileNotFoundError:
            return []
        entries = []
        for raw in data.split(b"\n"):
            if not raw.strip():
                continue
            try:
                entries.append(Entry.from_json(json.loads(raw)))
            except (ValueError, KeyError, TypeError):
                continue  # a torn line from a crash mid-append
        return entries

    def next_id(self) -> int:
        return max((e.id for e in self.read()), default=0) + 1

    def append(self, entry: Entry) -> None:
        """Append under the caller's lock, flushed and fsynced."""
        existed = self.path.exists()
        # ASCII escapes keep undecodable bytes (lone surrogates) readable as JSON.
        line = json.dumps(entry.to_json(), separators=(",", ":")) + "\n"
        append_durably(self.path, line.encode("ascii"))
        if not existed:
            fsync_dir(self.path.parent)


def undone_ids(entries: list[Entry]) -> dict[int, int]:
    """Entry id -> id of the undo that reverted it (an undone undo makes its target live again)."""
    undone: dict[int, int] = {}
    by_id = {e.id: e for e in entries}
    for e in entries:
        if e.action == "undo" and e.undoes is not None:
            undone[e.undoes] = e.id
            target = by_id.get(e.undoes)
            if target is not None and target.action == "undo" and target.undoes is not None:
                undone.pop(target.undoes, None)
    return undone
