"""The registry of stage kinds: one `Kind` per kind of stage, looked up by its name.

Shared physics and search code holds no kind names: it asks `get(name)` for the
kind's positions, its circuit and its hooks.  The built-in kinds are imported on
first use, so this module imports nothing of the physics and any module may use it.
"""

from __future__ import annotations

import importlib
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field

# Modules of this package that register a kind when imported, in the order kinds are listed.
BUILTIN = ("common_emitter", "emitter_follower", "collector_feedback", "split_common_emitter",
           "split_emitter_follower")


@dataclass(frozen=True)
class Kind:
    """One kind of single-transistor stage.

    Declarations:
      name          the CLI / JSON name (`--topology`);
      resistors     resistor positions, in build-sheet order;
      capacitors    capacitor positions;
      optional      positions a design may leave out (resistors or capacitors);
      output        "c" or "e": the transistor terminal COUT takes the signal from;
      inverting     the midband gain is negative;
      max_gain      the largest |gain| the kind can reach (None: no limit of its own);
      preset_gain   for a kind whose gain is set by nature (a follower), the gain a request
                    asks for it instead of a typed one;
      bias          "divider" (R1 from the top rail, R2 to ground) or "feedback" (RB
                    from the collector): how drawings and hand formulas read the base;
      emitter       the emitter resistor positions, top to bottom;
      cap_nodes     capacitor → the operating-point key of the node its + side faces;
      cap_sides     capacitor → (stage side, far side) in words, for orientation notes.
    Hooks (pure functions; see each kind module for the formulas):
      wire(stage, two, short)                  the nodal circuit (circuit.build);
      bias_network(r, supply_v)                the DC network (bias.Network);
      ac_terms(r, net, bypassed)               midband conductances and the AC resistances;
      supply_current(r, vcc, vb, ic, ib)       DC supply current (A);
      swing(r, ic, ie, vce, vc, vcc, rl, re_ac, a_bc)   load-line peak swings (V);
      dissipation(r, vcc, vb, vc, ie, ic, ib)  p_<position> (W);
      textbook(re_prime, beta, r_bias, re_ac, rc, rb, rl, rs)   hand estimates;
      held_network(r, ...)                     the large-signal network, capacitors held;
      ac_network(r, omega, ce)                 the low-frequency conductances (lowcut);
      boxes(groups, spec, transistor, betas)   the branch and bound over value boxes;
      ideal_values(spec, hfe_min, hfe_typ, ic_floor)  textbook values the search is seeded with
                                               (the operating current at least ic_floor, A);
      spec_bounds(spec)                        spec-level bounds in words (may be None).
    Node voltages are relative to ground (0 V); on split supplies (rails = 2) the bottom rail
    is r["vee"] < 0 and a source DC-coupled to the base (r["dc"], no CIN) is at 0 V DC.
    """

    name: str
    resistors: tuple[str, ...]
    capacitors: tuple[str, ...]
    optional: tuple[str, ...]
    output: str
    inverting: bool
    bias: str
    emitter: tuple[str, ...]
    cap_nodes: Mapping[str, str]
    cap_sides: Mapping[str, tuple[str, str]]
    wire: Callable
    bias_network: Callable
    ac_terms: Callable
    supply_current: Callable
    swing: Callable
    dissipation: Callable
    textbook: Callable
    held_network: Callable
    ac_network: Callable
    boxes: Callable
    ideal_values: Callable
    max_gain: float | None = None
    preset_gain: float | None = None  # a gain set by nature (a follower's): what a request asks for it
    spec_bounds: Callable | None = None
    summary: str = ""
    # 1: one positive supply (bottom rail = ground); 2: split supplies, ground between the rails
    # (the hooks read the negative rail as r["vee"] and a DC-coupled source as r["dc"]).
    rails: int = 1
    extra: Mapping = field(default_factory=dict)

    @property
    def output_key(self) -> str:
        """The operating-point key of the output node: "vc" or "ve"."""
        return "v" + self.output

    @property
    def output_node(self) -> str:
        """The circuit node (circuit.NODES) of the output terminal."""
        return {"c": "coll", "e": "emit"}[self.output]

    @property
    def required(self) -> tuple[str, ...]:
        return tuple(p for p in self.resistors if p not in self.optional)


# The hooks every kind module defines under these names (see `Kind`); `hooks` collects them.
HOOKS = ("wire", "bias_network", "ac_terms", "supply_current", "swing", "dissipation", "textbook", "held_network",
         "ac_network", "ideal_values")


def hooks(namespace: Mapping) -> dict[str, Callable]:
    """The kind's hook functions from its module's namespace (`hooks(globals())`), by their `Kind` names."""
    return {name: namespace[name] for name in HOOKS}


_KINDS: dict[str, Kind] = {}
_loaded = False


def register(kind: Kind) -> Kind:
    _KINDS[kind.name] = kind
    return kind


def _load() -> None:
    global _loaded
    if not _loaded:
        _loaded = True
        for module in BUILTIN:
            importlib.import_module(f"{__package__}.{module}")


def get(name: str) -> Kind:
    """The kind called `name`; ValueError naming the known kinds otherwise."""
    _load()
    try:
        return _KINDS[name]
    except (KeyError, TypeError):
        raise ValueError(f"unknown topology {name!r} (expected one of {', '.join(_KINDS)})") from None


def names() -> tuple[str, ...]:
    _load()
    return tuple(_KINDS)


class Names(Sequence):
    """The kind names as a sequence that is read when used (so it can be a module constant)."""

    def __getitem__(self, i):
        return names()[i]

    def __len__(self):
        return len(names())

    def __contains__(self, name):
        return name in names()

    def __repr__(self):
        return repr(names())


class ByKind(Mapping):
    """kind name → one of its declarations (e.g. ByKind("resistors")), read when used."""

    def __init__(self, attr: str):
        self.attr = attr

    def __getitem__(self, name):
        _load()
        if name not in _KINDS:
            raise KeyError(name)
        return getattr(_KINDS[name], self.attr)

    def __iter__(self):
        return iter(names())

    def __len__(self):
        return len(names())
