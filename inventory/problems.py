"""What is wrong with a drawer file, placed by file, line and column."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Problem:
    """One finding.  `line` is the physical line (header = 1), `column` the 1-based cell number.

    `text` is the offending cell text ("" when the finding is about a whole line or file),
    `severity` "error" (the line is left out of the inventory) or "warning" (it is used).
    """

    path: str
    line: int
    column: int
    text: str
    message: str
    severity: str = "error"

    def __str__(self) -> str:
        tag = "warning: " if self.severity == "warning" else ""
        return printable(f"{self.path}:{self.line}:{self.column}: {tag}{self.message}")

    @property
    def is_error(self) -> bool:
        return self.severity == "error"


def printable(text: str) -> str:
    """`text` on one line: control characters and undecodable bytes escaped (\\n, \\udce9)."""
    return "".join(c if c.isprintable() else repr(c)[1:-1] for c in text)


def shown(text: str) -> str:
    """A cell quoted in a message: escaped, and cut if long."""
    text = printable(text)
    return f'"{text if len(text) <= 40 else text[:37] + "..."}"'


def one_of(names: list[str]) -> str:
    """["kind", "qty"] → "kind or qty"; ["kind", "value", "qty"] → "kind, value or qty"."""
    return names[0] if len(names) == 1 else f"{', '.join(names[:-1])} or {names[-1]}"
