"""What a stage is: its topology, the value at each position, and its surroundings.

Positions are named as on the build sheet.  A position missing from `resistors`
or `capacitors` is absent from the circuit (an absent emitter resistor is a
short; an absent capacitor an open, except that an absent CE leaves RE2 unbypassed).
"""

from __future__ import annotations

from dataclasses import dataclass, field

from optimizer import kinds
from optimizer.physics.transistor import Transistor

# The built-in kinds' names (each kind declares itself in optimizer/kinds/).
COMMON_EMITTER = "common-emitter"
EMITTER_FOLLOWER = "emitter-follower"
COLLECTOR_FEEDBACK = "collector-feedback"
# Every registered kind, and its positions, read from the registry when used.
TOPOLOGIES = kinds.Names()
RESISTOR_POSITIONS = kinds.ByKind("resistors")
CAPACITOR_POSITIONS = kinds.ByKind("capacitors")
OPTIONAL_POSITIONS = kinds.ByKind("optional")  # positions a design may leave out


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
        kinds.get(self.topology)  # ValueError naming the known kinds

    @property
    def kind(self) -> kinds.Kind:
        return kinds.get(self.topology)

    def r(self, position: str) -> float:
        """Resistance at `position` in ohms; 0.0 when the position is absent."""
        return float(self.resistors.get(position, 0.0))
