"""The ngspice cross-check as table rows: each figure at each hFE corner, drawerfit's beside ngspice's.

Spelled by the one rule (widgets/figures.py): voltages, Rin and f_low in SI with units, gain as a
signed number, THD in percent.  The deviation is ngspice's figure less drawerfit's, relative to
drawerfit's (percent, signed); where that is not defined (drawerfit's figure is 0) it is the
difference in the figure's own unit.  Headless (no Textual).
"""

from __future__ import annotations

from .widgets import figures

COLUMNS = ("Figure", "Corner", "drawerfit", "ngspice", "Deviation")
LABELS = {"vb": "Base (no signal)", "ve": "Emitter (no signal)", "vc": "Collector (no signal)",
          # A chain's second transistor (optimizer.chain.crosscheck); its rows also name the transistor.
          "vb_b": "Base (no signal)", "ve_b": "Emitter (no signal)", "vc_b": "Collector (no signal)",
          "gain": "Gain", "rin": "Input resistance", "f_low": "Low cut-off", "thd": "Distortion (THD)"}
SPELL = {"vb": figures.volts, "ve": figures.volts, "vc": figures.volts, "vb_b": figures.volts, "ve_b": figures.volts,
         "vc_b": figures.volts, "gain": figures.gain, "rin": figures.ohms, "f_low": figures.hertz,
         "thd": lambda v: figures.percent(v, 2)}


def deviation_text(row: dict) -> str:
    """"+0.31 %" (relative, signed; "0.00 %" when it rounds to nothing), the difference in the figure's
    unit, or a dash."""
    rel = row.get("relative")
    if rel is not None:
        return "0.00 %" if abs(rel) < 5e-5 else f"{100 * rel:+.2f} %"  # no sign on what rounds to zero
    dev = row.get("deviation")
    if dev is None:
        return figures.DASH
    text = SPELL.get(row.get("figure"), figures.plain)(dev)
    return text if text.startswith(("-", "+", figures.DASH)) else "+" + text


def corner_text(row: dict) -> str:
    """"hFE min (200)", the hFE to three digits as the sheet's title spells it; a chain's row gives both
    transistors' hFE: "hFE min (100, 200)"."""
    hfe, hfe_b = row.get("hfe"), row.get("hfe_b")
    if isinstance(hfe, (int, float)) and isinstance(hfe_b, (int, float)):
        return f"hFE {row.get('corner', '')} ({hfe:.3g}, {hfe_b:.3g})"
    return f"hFE {row.get('corner', '')}" + (f" ({hfe:.3g})" if isinstance(hfe, (int, float)) else "")


def figure_text(row: dict) -> str:
    """The figure's name; a chain's transistor voltages name the transistor: "Q2 base (no signal)"."""
    label = LABELS.get(row.get("figure"), str(row.get("figure")))
    q = row.get("transistor")
    return f"{q} {label[0].lower()}{label[1:]}" if q else label


def table_rows(rows: list[dict]) -> list[tuple[str, str, str, str, str]]:
    """One row per (figure, corner), figures grouped together, corners in the order simulated."""
    order = list(LABELS)
    ranked = sorted(rows, key=lambda r: order.index(r["figure"]) if r.get("figure") in order else len(order))
    out = []
    for r in ranked:
        spell = SPELL.get(r.get("figure"), figures.plain)
        out.append((figure_text(r), corner_text(r), spell(r.get("drawerfit")),
                    spell(r.get("ngspice")), deviation_text(r)))
    return out
