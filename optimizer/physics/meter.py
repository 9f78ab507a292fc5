"""The meter checks of a build: each test point's DC voltage and the range it may read.

The range spans the transistor line's hFE (min, typical, max) and the spec's
temperature corners (Spec.temps_c: both ends of the range and 27 °C), with
nominal part values: the exact operating point (circuit.operating_point) at each
of those 3 × 3 corners.  A reading outside the range points at a wrong part, a
reversed transistor or a wiring fault, not at tolerance (the yield covers that).
"""

from __future__ import annotations

from dataclasses import replace

from optimizer.physics.circuit import build, operating_point
from optimizer.physics.stage import Stage
from optimizer.physics import polarity

TEST_POINTS = (("VB", "base"), ("VE", "emit"), ("VC", "coll"))


def meter_checks(stage: Stage, hfe: tuple[float, ...], temps_c: tuple[float, ...]) -> list[dict]:
    """[{"point": "VB", "node": "base", "typical": V, "low": V, "high": V}, …] in volts to ground.

    stage: the design at its typical hFE and 27 °C; hfe: the hFE values to span (e.g. min, typical, max);
    temps_c: the temperatures (°C) to span.  `typical` is the reading at the stage's own hFE and temperature.
    """
    typical = operating_point(build(stage))
    corners = [operating_point(build(replace(stage, transistor=stage.transistor.with_beta(b), temp_c=float(t))))
               for b in hfe for t in temps_c]
    out = []
    for point, node in TEST_POINTS:  # a PNP stage is solved as its mirror: readings in real polarity
        values = [polarity.node_volts(stage, c, node) for c in corners + [typical]]
        out.append({"point": point, "node": node, "typical": values[-1],
                    "low": float(min(values)), "high": float(max(values))})
    return out
