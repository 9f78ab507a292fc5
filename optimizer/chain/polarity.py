"""All-PNP chains as the mirror of all-NPN chains: the one place of optimizer/chain that knows polarity.

A PNP stage on one positive supply, emitter side to +V, is the mirror of the NPN stage with the
same parts (optimizer/physics/polarity.py: V' = VCC − V at every node of the stage).  Two PNP
stages joined at x are then the mirror of the two NPN stages joined at x: x, the interstage
capacitor CIN_B and every other node of both stages mirror together, and the source and load stay
on the real 0 V behind CIN and COUT_B, as for one stage.  So the chain's nodal solver
(circuit.py) solves the NPN twin of an all-PNP chain, and everything a user sees is read back
here: node voltages V = VCC − V' (not the source and load nodes), the nodes of the netlist (0 and
vcc swap), and the DC across each capacitor (which way its + lead goes).  Gain, Rin, Rout, swing,
THD, f_low, currents and VCE magnitudes are the twin's.

A chain mixing an NPN stage and a PNP stage is no mirror of anything solved here and is refused.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from optimizer.physics.polarity import NPN, PNP, SURROUNDING_NODES, SWAP, is_pnp


def polarity_of(chain) -> str:
    """"NPN" or "PNP", the polarity both stages share; ValueError for a mixed chain."""
    first, second = is_pnp(chain.first.transistor), is_pnp(chain.second.transistor)
    if first != second:
        raise ValueError("a chain's two transistors must share a polarity (both NPN or both PNP): "
                         "drawerfit does not model mixed NPN/PNP chains")
    return PNP if first else NPN


def twin(stage):
    """The stage with its transistor's polarity set to NPN: the circuit the solver builds (the mirror)."""
    if not is_pnp(stage.transistor):
        return stage
    return replace(stage, transistor=replace(stage.transistor, polarity=NPN))


def mirror_v(chain) -> float:
    """The supply for an all-PNP chain (the net is its mirror), 0 for an all-NPN chain."""
    return float(chain.first.supply_v) if polarity_of(chain) == PNP else 0.0


def real_volts(nodes, op, mirror: float) -> np.ndarray:
    """Node voltages `op` (..., n) of the solved net in real polarity (V to 0 V).

    nodes: the net's node names (n); mirror: Net.mirror_v.  The source and load nodes
    (src, in, out) sit on the real 0 V in both frames and are left as they are."""
    op = np.asarray(op, dtype=float)
    if not mirror:
        return op
    stage = np.array([n not in SURROUNDING_NODES for n in nodes])
    return np.where(stage, mirror - op, op)


def real_node(node: str, mirror: float) -> str:
    """The real circuit's name for a node of the solved net: 0 and vcc swap in an all-PNP chain."""
    return SWAP.get(node, node) if mirror else node
