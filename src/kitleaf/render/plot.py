"""Response plots: gain in dB against log frequency, as byte-reproducible SVG."""

from __future__ import annotations

import io
from dataclasses import dataclass

import matplotlib
from matplotlib.backends.backend_svg import FigureCanvasSVG
from matplotlib.figure import Figure

# Line styles as well as shades, so curves stay apart in greyscale print.
STYLES = (("#1b4f72", "-"), ("#a04000", "--"), ("#196f3d", "-."), ("#6c3483", ":"),
          ("#7b7d7d", (0, (5, 1, 1, 1))))
RC = {
    "svg.hashsalt": "kitleaf",  # fixed ids: the same input gives the same bytes
    "svg.fonttype": "none",
    "font.family": "DejaVu Sans",
    "font.size": 9,
    "axes.grid": True,
    "grid.color": "#d5d8dc",
    "grid.linewidth": 0.6,
}


@dataclass(frozen=True)
class Curve:
    """One trace: a label (a knob position, say) and gain in dB at each frequency."""

    label: str
    gain_db: tuple[float, ...]


@dataclass(frozen=True)
class ResponsePlot:
    """Everything a response plot shows."""

    title: str
    freqs: tuple[float, ...]
    curves: tuple[Curve, ...]
    band_low: tuple[float, ...] = ()
    band_high: tuple[float, ...] = ()
    corners: tuple[float, ...] = ()


def render_response_svg(plot: ResponsePlot) -> str:
    """The plot as SVG text; the same plot always gives the same bytes."""
    with matplotlib.rc_context(RC):
        fig = Figure(figsize=(6.4, 3.2), dpi=100)
        FigureCanvasSVG(fig)
        _draw(fig.add_subplot(1, 1, 1), plot)
        fig.tight_layout()
        out = io.StringIO()
        fig.savefig(out, format="svg", metadata={"Date": None, "Creator": "kitleaf"})
    return out.getvalue()


def _draw(ax, plot: ResponsePlot) -> None:
    if plot.band_low:
        ax.fill_between(plot.freqs, plot.band_low, plot.band_high, color="#aeb6bf", alpha=0.45,
                        linewidth=0, label="part tolerance (5–95 %)")
    for i, curve in enumerate(plot.curves):
        colour, style = STYLES[i % len(STYLES)]
        ax.plot(plot.freqs, curve.gain_db, color=colour, linestyle=style, linewidth=1.6,
                label=curve.label)
    for corner in plot.corners:
        ax.axvline(corner, color="#566573", linestyle=":", linewidth=1.0)
    ax.set_xscale("log")
    ax.set_xlim(plot.freqs[0], plot.freqs[-1])
    ax.set_xlabel("Frequency (Hz)")
    ax.set_ylabel("Gain (dB)")
    ax.set_title(plot.title, fontsize=10)
    if plot.curves and (len(plot.curves) > 1 or plot.band_low):
        ax.legend(loc="lower center", fontsize=7.5, ncol=3, frameon=True)
