"""The house style of phasekit figures: one palette, one marker set, the trade's labels.

Colours are our own choice (muted earth and mineral tones, distinguishable in print and for
the common colour-vision deficiencies as far as a 16-colour set allows). A solid keeps its
colour in every figure; solids not listed get colours from ``EXTRA`` in a fixed order.
"""

from __future__ import annotations

#: colour of each solid's crystallization field and saturation curve
SOLID_COLOURS = {
    "halite": "#5b7fa3",
    "sylvite": "#c8553d",
    "carnallite": "#d9a441",
    "bischofite": "#7a9e7e",
    "kainite": "#8c6d9e",
    "kieserite": "#4f6d5e",
    "hexahydrite": "#9fb8ad",
    "epsomite": "#3f8f8a",
    "schoenite": "#b5838d",
    "leonite": "#e0b1cb",
    "bloedite": "#6d597a",
    "glaserite": "#e5989b",
    "arcanite": "#a44a3f",
    "thenardite": "#f2cc8f",
    "mirabilite": "#81b29a",
    "niter": "#bc6c25",
    "nitratine": "#606c38",
    "gypsum": "#adb5bd",
    "anhydrite": "#6c757d",
    "antarcticite": "#90a955",
    "tachyhydrite": "#ddb892",
}
EXTRA = ["#7f5539", "#588157", "#9d4edd", "#e76f51", "#2a9d8f", "#264653", "#f4a261", "#457b9d"]

#: lines
CURVE_WIDTH = 2.2
METASTABLE_DASH = "dot"  # plotly dash name; matplotlib: ":"
TIE_LINE_COLOUR = "#8d99ae"
TIE_LINE_WIDTH = 0.8
PATH_COLOUR = "#1b1b1b"
FIELD_OPACITY = 0.28
UNSATURATED_COLOUR = "#f4f1ea"

#: markers: plotly symbol, matplotlib marker, size
MARKERS = {
    "eutonic": ("diamond", "D", 10),
    "transition point": ("triangle-up", "^", 11),
    "invariant point": ("diamond", "D", 10),
    "side point": ("square", "s", 8),
    "corner": ("circle", "o", 7),
    "quadruple point": ("star", "*", 14),
    "binary transition point": ("hexagon", "h", 11),
    "solid": ("x", "x", 9),
    "path": ("circle-open", "o", 6),
}
INVARIANT_COLOUR = "#1d3557"

#: the trade's terms used in legends and hover text
LABELS = {
    "curve": "saturation curve",
    "metastable": "metastable extension",
    "field": "crystallization field",
    "three_phase": "three-phase region",
    "unsaturated": "unsaturated solution",
    "invariant": "invariant point",
    "eutonic": "eutonic point",
    "transition": "transition point",
    "tie_line": "tie line",
    "path": "crystallization path",
    "boundary": "field boundary",
    "quadruple": "quadruple point",
}

FONT_FAMILY = "DejaVu Sans, Arial, sans-serif"


def solid_colour(name: str, _cache: dict = {}) -> str:  # noqa: B006 (deliberate memo)
    """Colour of a solid (stable across figures within a session)."""
    if name in SOLID_COLOURS:
        return SOLID_COLOURS[name]
    if name not in _cache:
        _cache[name] = EXTRA[len(_cache) % len(EXTRA)]
    return _cache[name]


def rgba(hex_colour: str, alpha: float) -> str:
    """``#rrggbb`` to a CSS ``rgba(...)`` string."""
    h = hex_colour.lstrip("#")
    r, g, b = (int(h[i:i + 2], 16) for i in (0, 2, 4))
    return f"rgba({r},{g},{b},{alpha:g})"


def invariant_marker(kind: str) -> tuple:
    """(plotly symbol, matplotlib marker, size) for an invariant point kind."""
    return MARKERS.get(kind, MARKERS["invariant point"])


def polygon_centroid(x, y) -> tuple:
    """Area centroid of a closed polygon (falls back on the vertex mean for a degenerate one)."""
    import numpy as np

    x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    x1, y1 = np.roll(x, -1), np.roll(y, -1)
    cross = x * y1 - x1 * y
    a = cross.sum() / 2.0
    if abs(a) < 1e-12:
        return float(x.mean()), float(y.mean())
    return float(((x + x1) * cross).sum() / (6 * a)), float(((y + y1) * cross).sum() / (6 * a))
