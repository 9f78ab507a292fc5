"""A build as the journal keeps it: its record (to show its sheet again) and its design tag.

Shared by `drawerfit build` and the app's build sheet, so both refuse the same second build.
A build's journal reason ends in a tag `[design <digest>]` naming the design it took parts for;
a take entry holding the tag and not undone means "already built".  Headless (no Textual).
"""

from __future__ import annotations

import hashlib
import json

from inventory.journal import Entry, undone_ids

MAX_RANK = 1000  # a search shows a handful of designs; a larger rank in a record is damage


def build_record(rank: int, design: dict, result: dict) -> dict:
    """What a build's journal entry keeps to reopen its sheet later: the design, its rank, its request
    and (for a saved file) the stock fingerprint, so the reopened sheet names the same design tag."""
    record = {"rank": rank, "design": design, "spec": result.get("spec") or {}}
    if result.get("fingerprint") is not None:
        record["fingerprint"] = result["fingerprint"]
    return record


def design_tag(doc: dict, pick: int) -> str:
    """`[design 1a2b3c4d5e6f]`: the same saved design gives the same tag, another design another."""
    basis = json.dumps({"fingerprint": doc.get("fingerprint"), "uses": doc["designs"][pick - 1]["uses"],
                        "pick": pick}, sort_keys=True)
    return f"[design {hashlib.sha256(basis.encode()).hexdigest()[:12]}]"


def tag_of(rank: int, design: dict, result: dict) -> str:
    """The tag of design #rank of a result document (or of a build record's fields)."""
    designs = [{"uses": []}] * (rank - 1) + [design]  # design_tag reads only the picked design's uses
    return design_tag({"fingerprint": result.get("fingerprint"), "designs": designs}, rank)


def last_build(history: list[Entry], tag: str) -> Entry | None:
    """The latest take entry carrying `tag` that is not undone, or None when the design is not built."""
    undone = undone_ids(history)
    built = [e for e in history if e.action == "take" and tag in e.reason and e.id not in undone]
    return built[-1] if built else None


def sheet_document(rank: int, design: dict, result: dict) -> tuple[dict, int]:
    """(doc, pick) for `tui.cmd_sheet.render` from a sheet's fields, whether the result document holds
    the design (a search or a saved file) or only its request (a build record from the journal)."""
    designs = result.get("designs")
    if isinstance(designs, list) and 1 <= rank <= len(designs) and designs[rank - 1] is design:
        return result, rank
    doc = {k: v for k, v in result.items() if k != "designs"}
    doc["designs"] = [{}] * (rank - 1) + [design]  # the sheet reads only the picked design
    return doc, rank


def record_problem(entry: Entry | None, entry_id: int) -> str | None:
    """Why the sheet of journal entry `entry_id` cannot be shown (None: it can): not a build, no record
    kept (a build from before records were kept, or a take by hand), or a record of an odd shape."""
    if entry is None:
        return f"Change #{entry_id} is not in the journal any more."
    if entry.action != "take":
        return f"Change #{entry_id} is not a build ({entry.action}): only builds have a sheet."
    record = entry.design
    if record is None:
        return f"Change #{entry_id} kept no build sheet (a take by hand, or a build from before sheets were kept)."
    design, rank = record.get("design"), record.get("rank", 1)
    ok = (isinstance(design, dict) and isinstance(design.get("parts"), dict)
          and all(isinstance(p, dict) for p in design["parts"].values())
          and isinstance(design.get("predicted", {}), dict) and isinstance(design.get("uses", []), list)
          and isinstance(record.get("spec", {}), dict)
          and isinstance(rank, int) and not isinstance(rank, bool) and 1 <= rank <= MAX_RANK)
    return None if ok else f"The build record of change #{entry_id} is damaged; its sheet cannot be shown."
