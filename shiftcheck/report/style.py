"""Visual language of shiftcheck reports: colours, fonts, sizes, page formats.

One colour per nucleus class, the same in every figure. The class colours are Paul Tol's
"muted" qualitative scheme, designed to stay distinguishable for the common forms of colour
blindness and in greyscale print:

    P. Tol, "Colour Schemes", SRON technical note SRON/EPS/TN/09-002, issue 3.2 (2021),
    https://personal.sron.nl/~pault/data/colourschemes.pdf

Continuous shading (RMSD tables, the models x residues strip) uses a single-hue sequential
scheme, ColorBrewer "Blues" (C. A. Brewer, colorbrewer2.org; M. Harrower and C. A. Brewer,
Cartogr. J. 40:27-37, 2003): only lightness changes, so it reads the same with any form of
colour blindness and in greyscale. Light means "agrees with the data", dark "disagrees"; the
palest end is cut off so that a pale cell is never mistaken for "no data" (white, hatched). Emphasis (flagged atoms, the
best group of models) is carried by black outlines and filled-versus-open markers rather
than by hue, so nothing depends on telling red from green.
"""
from __future__ import annotations

from contextlib import contextmanager

import matplotlib

__all__ = ["NUCLEUS_COLOURS", "NUCLEUS_ORDER", "OFFSET_TYPE", "ISOTOPE_LABEL", "A4_PORTRAIT",
           "A4_LANDSCAPE", "DPI", "SEQUENTIAL_CMAP", "NEUTRAL", "NEUTRAL_LIGHT", "EMPHASIS",
           "BEST_GROUP", "FONT_SIZE", "SMALL", "TITLE", "MONO", "report_style", "nucleus_colour",
           "sequential_cmap", "NO_DATA_HATCH", "NO_DATA_EDGE"]

# Paul Tol "muted" (SRON/EPS/TN/09-002): indigo, cyan, green, sand, teal, wine, rose, purple
NUCLEUS_COLOURS: dict[str, str] = {
    "H": "#332288",
    "HA": "#88CCEE",
    "CA": "#117733",
    "CB": "#DDCC77",
    "C": "#44AA99",
    "N": "#882255",
    "HMe": "#CC6677",
    "Haro": "#AA4499",
}
NUCLEUS_ORDER: tuple[str, ...] = ("H", "HA", "CA", "CB", "C", "N", "HMe", "Haro")
# which referencing offset (1H, 13C, 15N) applies to a nucleus class
OFFSET_TYPE: dict[str, str] = {"H": "H", "HA": "H", "HMe": "H", "Haro": "H",
                               "CA": "C", "CB": "C", "C": "C", "N": "N"}
ISOTOPE_LABEL: dict[str, str] = {"H": "1H", "C": "13C", "N": "15N"}

NEUTRAL = "#4D4D4D"        # dark grey: ordinary data
NEUTRAL_LIGHT = "#BBBBBB"  # light grey: context, "before" histograms
EMPHASIS = "#000000"       # black outlines: flagged atoms (report.html)
BEST_GROUP = "#332288"     # Tol indigo: filled markers of the indistinguishable best group
SEQUENTIAL_CMAP = "Blues"
NO_DATA_HATCH = "////"
NO_DATA_EDGE = "#D0D0D0"

# A4 in inches (210 x 297 mm)
A4_PORTRAIT: tuple[float, float] = (8.27, 11.69)
A4_LANDSCAPE: tuple[float, float] = (11.69, 8.27)
DPI = 150

FONT_SIZE = 9.0
SMALL = 7.5
TITLE = 12.0
MONO = "DejaVu Sans Mono"

_RC = {
    "font.family": "DejaVu Sans",
    "font.size": FONT_SIZE,
    "axes.titlesize": 10.0,
    "axes.labelsize": FONT_SIZE,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.linewidth": 0.7,
    "axes.grid": False,
    "xtick.labelsize": 8.0,
    "ytick.labelsize": 8.0,
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "legend.frameon": False,
    "legend.fontsize": SMALL,
    "figure.dpi": DPI,
    "savefig.dpi": DPI,
    "axes.unicode_minus": False,   # plain '-' so PDF text extraction finds the numbers
    "pdf.fonttype": 42,            # embed TrueType: text stays searchable in the PDF
    "svg.fonttype": "none",
}


@contextmanager
def report_style():
    """Context in which every report figure is built (matplotlib rc settings)."""
    with matplotlib.rc_context(_RC):
        yield


def sequential_cmap():
    """The shading map: ColorBrewer Blues from 15 % to 100 % (palest tint reserved)."""
    from matplotlib import colormaps
    from matplotlib.colors import ListedColormap
    import numpy as np

    base = colormaps[SEQUENTIAL_CMAP]
    return ListedColormap(base(np.linspace(0.15, 1.0, 256)), name="shiftcheck_blues")


def nucleus_colour(nucleus: str) -> str:
    """Colour of a nucleus class; neutral grey for anything unknown."""
    return NUCLEUS_COLOURS.get(nucleus, NEUTRAL)
