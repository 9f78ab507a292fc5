"""The chain kinds, their stages and how the second stage's positions are named (nothing heavy imported).

A chain name joins its two stage topologies with "+".  The second stage's positions carry the
suffix "_B" (R1_B, CIN_B, …); its transistor is Q2.  The stages are AC-coupled: the first
stage has no COUT of its own, and the second stage's CIN_B is the interstage capacitor.
"""

from __future__ import annotations

CE, EF = "common-emitter", "emitter-follower"
CHAINS = {
    f"{EF}+{CE}": (EF, CE),  # high input resistance, then gain
    f"{CE}+{CE}": (CE, CE),  # more gain than one clean stage gives
    f"{CE}+{EF}": (CE, EF),  # gain, then a low output resistance for low-resistance loads
}
SUFFIX = "_B"
SECOND_Q = "Q2"


def is_chain(topology: str) -> bool:
    return topology in CHAINS


def second(position: str) -> str:
    """A second-stage position's name in a chain design: "R1" → "R1_B"; "Q1" → "Q2"."""
    return SECOND_Q if position == "Q1" else position + SUFFIX


def split(position: str) -> tuple[int, str]:
    """(stage index 0 or 1, the stage's own position name) of a chain design's position."""
    if position == SECOND_Q:
        return 1, "Q1"
    if position.endswith(SUFFIX):
        return 1, position[: -len(SUFFIX)]
    return 0, position
