"""The response plot and the Monte Carlo histogram, drawn with matplotlib as SVG for the printed sheet.

Text stays text in the SVG (it prints sharp and can be searched); the frequency
axis is labelled in whole decades (10 Hz, 100 Hz, 1 kHz …) and the histogram's
counts in whole builds.  Drawing only: the figures come from the design document.
"""

from __future__ import annotations

import io
import math
import re

import matplotlib

matplotlib.use("Agg")  # no display: draw to memory only
from matplotlib.figure import Figure  # noqa: E402
from matplotlib.ticker import FuncFormatter, LogLocator, MaxNLocator, NullFormatter  # noqa: E402

STYLE = {"svg.fonttype": "none", "svg.hashsalt": "drawerfit", "font.size": 8, "font.family": "sans-serif",
         "axes.spines.top": False, "axes.spines.right": False}
INK, ACCENT, MUTED = "#1d3557", "#c8553d", "#8d99ae"  # drawerfit's own print colours
SIZE_IN = (3.5, 2.3)


def decade_label(x: float, _pos=None) -> str:
    """10 → "10", 1000 → "1k", 1e6 → "1M": whole decades only (the axis label carries the unit)."""
    if x <= 0:
        return ""
    k = round(math.log10(x))
    if abs(math.log10(x) - k) > 1e-6:
        return ""
    prefixes = {0: "", 3: "k", 6: "M", -3: "m"}
    base = 3 * math.floor(k / 3)
    return f"{10 ** (k - base):g}{prefixes.get(base, f'e{base}')}"


def _svg(fig: Figure, prefix: str) -> str:
    buf = io.StringIO()
    with matplotlib.rc_context(STYLE):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": "drawerfit"})
    svg = buf.getvalue()
    svg = svg[svg.index("<svg"):]  # inline use: drop the XML prolog and doctype
    svg = re.sub(r"<metadata>.*?</metadata>", "", svg, flags=re.S)  # RDF credits: not needed inline
    return svg.replace('id="', f'id="{prefix}-').replace('url(#', f'url(#{prefix}-').replace(
        'xlink:href="#', f'xlink:href="#{prefix}-')


def response_svg(design: dict, low_cut_hz: float | None = None) -> str | None:
    """Gain (dB) against frequency on decade axes, with f_low (and the asked low cut) marked; None if absent."""
    resp = design.get("response") or {}
    f, g = resp.get("freq_hz"), resp.get("gain_db")
    if not f or not g:
        return None
    pairs = [(x, y) for x, y in zip(f, g) if x and y is not None]
    with matplotlib.rc_context(STYLE):
        fig = Figure(figsize=SIZE_IN)
        ax = fig.add_subplot()
        ax.semilogx([p[0] for p in pairs], [p[1] for p in pairs], color=INK, lw=1.4)
        f_low = (design.get("predicted") or {}).get("f_low")
        if f_low:
            ax.axvline(f_low, color=ACCENT, lw=1, ls="--", label=f"f_low {f_low:.3g} Hz")
        if low_cut_hz:
            ax.axvline(low_cut_hz, color=MUTED, lw=1, ls=":", label=f"asked ≤ {low_cut_hz:g} Hz")
        ax.xaxis.set_major_locator(LogLocator(base=10, numticks=12))
        ax.xaxis.set_major_formatter(FuncFormatter(decade_label))
        ax.xaxis.set_minor_formatter(NullFormatter())
        ax.set_xlabel("frequency, Hz")
        ax.set_ylabel("gain, dB (source EMF to load)")
        ax.grid(True, which="major", color="#dddddd", lw=0.6)
        ax.legend(frameon=False, loc="lower right")
        fig.tight_layout()
    return _svg(fig, "resp")


def histogram_svg(design: dict, spec: dict) -> str | None:
    """Monte Carlo gain of the simulated builds, with the spec's gain window; None when no samples were kept."""
    mc = design.get("mc") or {}
    gains = mc.get("gain")
    if not gains:
        return None
    with matplotlib.rc_context(STYLE):
        fig = Figure(figsize=SIZE_IN)
        ax = fig.add_subplot()
        ax.hist(gains, bins=30, color=INK, alpha=0.85)
        target, tol = spec.get("gain"), spec.get("gain_tol")
        if target and tol is not None:
            sign = -1.0 if ((design.get("predicted") or {}).get("gain") or 1.0) < 0 else 1.0  # null: not known
            for edge in (target * (1 - tol), target * (1 + tol)):
                ax.axvline(sign * edge, color=ACCENT, lw=1, ls="--")
        ax.yaxis.set_major_locator(MaxNLocator(integer=True))
        ax.set_xlabel("gain at midband (dashed: the asked window)")
        ax.set_ylabel("builds")
        ax.set_title(f"{len(gains)} simulated builds (seed {mc.get('seed', '?')})", fontsize=8)
        fig.tight_layout()
    return _svg(fig, "hist")
