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
needed a column the file lacked.  A take may carry "design": the build's record (a JSON
object: the design, its rank and request) so its build sheet can be shown again; a value of
another shape is ignored on reading, and entries without it are written without the key.  An
undo entry names the entry it reverts in `undoes` and lists the changes it made, so it can be
undone in turn.

The drawer file is saved before its entry is appended (both under the drawer's lock): a crash
between the two leaves a change without an entry, never an entry for a change not made.  A torn
last line from a crash mid-append is skipped when reading and closed off by the next append.
Ids count up from 1 and are never given out twice: a damaged line (torn, or edited by hand)
counts as carrying the number it shows, or one above every line before it, whichever is more.
"""

from __future__ import annotations

import json
import re
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
    design: dict | None = None  # a build's record (take only); kept out of the line when absent

    def to_json(self) -> dict:
        out = asdict(self)
        if out["design"] is None:
            del out["design"]
        return out

    @classmethod
    def from_json(cls, obj: object) -> Entry:
        """The entry a journal line holds; ValueError for any line of another shape (hand-edited, foreign)."""
        if not isinstance(obj, dict):
            raise ValueError("a journal line must be a JSON object")
        changes = obj.get("changes", [])
        if not isinstance(changes, list):
            raise ValueError("changes must be a list")
        undoes = obj.get("undoes")
        if undoes is not None and not _is_int(undoes):
            raise ValueError("undoes must be a change number or null")
        action = obj.get("action")
        if action not in ACTIONS or not _is_int(obj.get("id")) or not isinstance(obj.get("time"), str):
            raise ValueError("id, time or action is missing or of the wrong type")
        return cls(
            id=obj["id"], time=obj["time"], action=action,
            reason=str(obj.get("reason", "")), file=str(obj.get("file", "")),
            changes=[_change(c) for c in changes], undoes=undoes,
            design=obj["design"] if isinstance(obj.get("design"), dict) else None,  # odd shapes: no record
        )


def _is_int(x: object) -> bool:
    return isinstance(x, int) and not isinstance(x, bool)


_CHANGE_TYPES = {
    "line": _is_int, "index": _is_int,
    "identity": lambda v: v is None or (isinstance(v, list) and all(
        x is None or isinstance(x, (str, int, float, bool)) for x in v)),
    "row": lambda v: isinstance(v, dict) and all(isinstance(k, str) and isinstance(x, str) for k, x in v.items()),
    "raw_before": lambda v: v is None or isinstance(v, str), "raw_after": lambda v: v is None or isinstance(v, str),
    "qty_before": lambda v: v is None or _is_int(v), "qty_after": lambda v: v is None or _is_int(v),
    "header": lambda v: isinstance(v, bool), "rewrite": lambda v: isinstance(v, bool),
}


def _change(obj: object) -> Change:
    """A Change from its JSON, every field of the type the undo code relies on (else ValueError)."""
    if not isinstance(obj, dict) or set(obj) - set(_CHANGE_TYPES):
        raise ValueError("a change must be an object with the journal's fields")
    fields = {"header": False, "rewrite": False, **obj}
    missing = set(_CHANGE_TYPES) - set(fields)
    if missing or not all(_CHANGE_TYPES[k](v) for k, v in fields.items()):
        raise ValueError("a change field is missing or of the wrong type")
    return Change(**fields)


def now_iso() -> str:
    """ISO 8601 UTC with milliseconds and a Z."""
    return datetime.now(timezone.utc).isoformat(timespec="milliseconds").replace("+00:00", "Z")


# The number a damaged line shows (entries are written with "id" first); at most 15 digits, so a
# hand-typed giant cannot push the numbering out of range.
_SHOWN_ID = re.compile(rb'"id"\s*:\s*([0-9]{1,15})(?![0-9])')


class Journal:
    def __init__(self, path: str | Path) -> None:
        self.path = Path(path)
        self.damaged: list[int] = []  # line numbers (1-based) the last read() could not use
        self._last_id = 0  # the highest number any line of the last read() carried or may have carried

    @property
    def skipped(self) -> int:
        return len(self.damaged)

    def read(self) -> list[Entry]:
        """Every readable entry in order; torn or damaged lines are skipped (their numbers in `damaged`)."""
        self.damaged, self._last_id = [], 0
        try:
            data = self.path.read_bytes()
        except FileNotFoundError:
            return []
        entries = []
        for number, raw in enumerate(data.split(b"\n"), 1):
            if not raw.strip():
                continue
            try:
                entry = Entry.from_json(json.loads(raw))
            except (ValueError, RecursionError):  # JSONDecodeError and UnicodeDecodeError are ValueErrors
                # A torn line from a crash mid-append, or one edited by hand.  It was written with a
                # number above every line before it, or shows its own: neither may be given out again.
                self.damaged.append(number)
                shown = _SHOWN_ID.search(raw)
                self._last_id = max(self._last_id + 1, int(shown.group(1)) if shown else 0)
                continue
            entries.append(entry)
            self._last_id = max(self._last_id, entry.id)
        return entries

    def damage_notes(self) -> list[str]:
        """One `file:line: …` line per line the last read() left out."""
        return [f"{self.path}:{n}: not a journal entry (torn by a crash or edited by hand); left out, "
                "the other entries are read" for n in self.damaged]

    def next_id(self) -> int:
        """A number no line of the journal carries or may have carried (a damaged line counts as one)."""
        self.read()
        return self._last_id + 1

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
