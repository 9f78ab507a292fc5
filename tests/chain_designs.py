"""Hand-made chains of each kind (our own values, typical bench choices) for the chain tests."""

from __future__ import annotations

from optimizer.chain.circuit import Chain
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor, is_from_vbe

Q = Transistor(name="test NPN", bf=245.0, is_a=float(is_from_vbe(0.66)), vaf_v=90.0, hfe_min=150, hfe_max=400)
CE_A = ({"R1": 82e3, "R2": 15e3, "RC": 8.2e3, "RE1": 330.0, "RE2": 1.2e3}, {"CIN": 2.2e-6, "CE": 100e-6})
CE_B = ({"R1": 47e3, "R2": 10e3, "RC": 3.3e3, "RE1": 220.0, "RE2": 680.0},
        {"CIN": 4.7e-6, "COUT": 10e-6, "CE": 220e-6})
EF_A = ({"R1": 1e6, "R2": 1.5e6, "RE": 15e3}, {"CIN": 470e-9})
EF_B = ({"R1": 27e3, "R2": 33e3, "RE": 1.5e3}, {"CIN": 10e-6, "COUT": 100e-6})


def chain(kind: str, supply_v=12.0, source_ohms=10e3, load_ohms=10e3, temp_c=27.0) -> Chain:
    first, second = kind.split("+")
    r1, c1 = EF_A if first == "emitter-follower" else CE_A
    r2, c2 = EF_B if second == "emitter-follower" else CE_B
    s1 = Stage(first, r1, c1, supply_v, source_ohms, float("inf"), Q, temp_c)
    s2 = Stage(second, r2, c2, supply_v, 0.0, load_ohms, Q, temp_c)
    return Chain(kind, s1, s2)


KINDS = ("emitter-follower+common-emitter", "common-emitter+common-emitter", "common-emitter+emitter-follower")
