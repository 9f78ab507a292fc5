"""The meter checks of a chain build: VB, VE and VC of each transistor and the range each may read.

As for one stage (optimizer.physics.meter): the range spans each transistor line's hFE (min,
typical, max; the two transistors independently) and the spec's temperature corners, with
nominal part values, by the exact DC point of the whole chain (chain/circuit.py) at every
corner in one batch.  An all-PNP chain is solved as its NPN mirror: its readings are turned back
into real polarity (Net.real), and its node names are the real circuit's (deck.deck_nodes).
"""

from __future__ import annotations

import itertools

from optimizer.chain.circuit import Chain, build_net, operating_point
from optimizer.chain.deck import deck_nodes

TEST_POINTS = (("VB", 1), ("VE", 2), ("VC", 0))  # index into a transistor's (collector, base, emitter)
TRANSISTORS = ("Q1", "Q2")


def chain_meter_checks(chain: Chain, hfe_first: tuple[float, ...], hfe_second: tuple[float, ...],
                       temps_c: tuple[float, ...]) -> list[dict]:
    """[{"transistor": "Q1", "point": "VB", "node": deck node, "typical": V, "low": V, "high": V}, …],
    Q1's three points then Q2's, volts to ground.

    chain: the design at its transistors' typical hFE and 27 °C (chain.first.temp_c); hfe_first,
    hfe_second: the hFE values of Q1 and Q2 to span; temps_c: the temperatures (°C) to span.
    `typical` is the reading at the chain's own hFE and temperature; `node` names the netlist's node.
    """
    typical = (chain.first.transistor.bf, chain.second.transistor.bf, chain.first.temp_c)
    corners = [typical] + [(float(b1), float(b2), float(t))
                           for b1, b2, t in itertools.product(hfe_first, hfe_second, temps_c)]
    net = build_net(chain, corners)
    op = net.real(operating_point(net))  # (corners, nodes), real polarity: row 0 is the typical reading
    names = deck_nodes(net)
    out = []
    for q, terminals in zip(TRANSISTORS, net.qs, strict=True):
        for point, k in TEST_POINTS:
            v = op[:, net.nodes.index(terminals[k])]
            out.append({"transistor": q, "point": point, "node": names[terminals[k]], "typical": float(v[0]),
                        "low": float(v.min()), "high": float(v.max())})
    return out
