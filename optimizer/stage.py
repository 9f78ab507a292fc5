"""What a stage is: its topology, the value at each position, and its surroundings.

Positions are named as on the build sheet.  A position missing from `resistors`
or `capacitors` is absent from the circuit (an absent emitter resistor is a
short; an absent capacitor an open, except that an absent CE leaves RE2 unbypassed).
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .transistor import Transistor

COMMON_EMITTER = "common-emitter"
EMITTER_FOLLOWER = "emitter-follower"
COLLECTOR_FEEDBACK = "collector-feedback"
TOPOLOGIES = (COMMON_EMITTER, EMITTER_FOLLOWER, COLLECTOR_FEEDBACK)

# Resistor and capacitor positions per topology.  RE1 is the unbypassed part of
# the emitter resistance, RE2 the part bypassed by CE.
RESISTOR_POSITIONS = {
    COMMON_EMITTER: ("R1", "R2", "RC", "RE1", "RE2"),
    EMITTER_FOLLOWER: ("R1", "R2", "RE"),
    COLLECTOR_FEEDBACK: ("RB", "RC", "RE1", "RE2"),
}
CAPACITOR_POSITIONS = {
    COMMON_EMITTER: ("CIN", "COUT", "CE"),
    EMITTER_FOLLOWER: ("CIN", "COUT"),
    COLLECTOR_FEEDBACK: ("CIN", "COUT", "CE"),
}
# Positions that may be left out of a design.
OPTIONAL_POSITIONS = {
    COMMON_EMITTER: ("RE1", "RE2", "CE"),
    EMITTER_FOLLOWER: (),
    COLLECTOR_FEEDBACK: ("RE1", "RE2", "CE"),
}


@dataclass(frozen=True)
class Stage:
    """One concrete stage.  Ohms, farads, volts, °C."""

    topology: str
    resistors: dict[str, float]
    capacitors: dict[str, float] = field(default_factory=dict)
    supply_v: float = 12.0
    source_ohms: float = 0.0
    load_ohms: float = float("inf")
    transistor: Transistor = field(default_factory=Transistor)
    temp_c: float = 27.0

    def __post_init__(self):
        if self.topology not in TOPOLOGIES:
            raise ValueError(f"unknown topology {self.topology!r} (expected one of {', '.join(TOPOLOGIES)})")

    def r(self, position: str) -> float:
        """Resistance at `position` in ohms; 0.0 when the position is absent."""
        return float(self.resistors.get(position, 0.0))
