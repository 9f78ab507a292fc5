"""One drawer line as the rest of the program sees it: SI values, no spelling."""

from __future__ import annotations

from dataclasses import dataclass

KINDS = ("resistor", "capacitor", "transistor")
DIELECTRICS = ("c0g", "np0", "x7r", "x5r", "film", "electrolytic", "tantalum")
POLARISED = frozenset({"electrolytic", "tantalum"})


@dataclass(frozen=True)
class Part:
    """A drawer line.  `line` is its line number in the file (header = 1).

    value: ohms for resistors, farads for capacitors, None for transistors.
    tolerance is a fraction (0.05 for 5 %); ratings in W, V, A.
    """

    line: int
    kind: str
    value: float | None
    qty: int
    tolerance: float | None = None
    power_w: float | None = None
    voltage_v: float | None = None
    dielectric: str | None = None
    part: str | None = None
    polarity: str | None = None
    hfe_min: float | None = None
    hfe_max: float | None = None
    vceo_v: float | None = None
    ic_max_a: float | None = None
    pd_max_w: float | None = None
    location: str = ""
    notes: str = ""

    @property
    def polarised(self) -> bool:
        return self.dielectric in POLARISED

    @property
    def identity(self) -> tuple:
        """What makes two lines the same stock, whatever line they sit on.

        Used to re-find a part after the file was edited elsewhere (lines moved).
        """
        return (
            self.kind, self.value, self.tolerance, self.power_w, self.voltage_v, self.dielectric,
            self.part, self.polarity, self.location,
        )
