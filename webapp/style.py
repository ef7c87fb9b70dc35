"""The app's palette and the base layout of its figures.

Solids take the library's house colours (:mod:`phasekit.plotting.style`), so a field on the
diagram, a line of the sequence chart and a bar of the pond harvest can be matched by eye. The
interface colours below are the app's own and are declared again as CSS variables in
``webapp/assets/app.css``.
"""

from __future__ import annotations

from phasekit.plotting import style as _lib_style

#: interface colours (mirrored in assets/app.css)
INK = "#22313f"
MUTED = "#6b7683"
PAPER = "#ffffff"
GRID = "#e3e0d8"
BRINE = "#0f6e7a"  # the brine point and its path
PATH_END = "#7a1f3d"
ACCENT = "#c7792b"



def solid_colour(name: str) -> str:
    """The colour of a solid: the library's house colours (phasekit.plotting.style), the same in every figure."""
    return _lib_style.solid_colour(str(name))


def base_layout(**extra) -> dict:
    """Layout shared by every figure: fonts, paper, margins, legend."""
    layout = {
        "font": {"family": _lib_style.FONT_FAMILY, "size": 13, "color": INK},
        "paper_bgcolor": PAPER,
        "plot_bgcolor": PAPER,
        "margin": {"l": 60, "r": 20, "t": 40, "b": 50},
        "legend": {"bgcolor": "rgba(255,255,255,0.8)", "bordercolor": GRID, "borderwidth": 1},
        "hoverlabel": {"bgcolor": "#fdfbf6", "bordercolor": INK, "font": {"color": INK}},
        "colorway": list(_lib_style.SOLID_COLOURS.values()),
    }
    layout.update(extra)
    return layout


def axis(title: str, **extra) -> dict:
    """A rectangular axis in the app's style."""
    out = {"title": {"text": title}, "gridcolor": GRID, "zerolinecolor": GRID, "linecolor": MUTED,
           "showline": True, "mirror": True, "ticks": "outside"}
    out.update(extra)
    return out


def graph_config(filename: str) -> dict:
    """dcc.Graph config: plotly's own image export (PNG from the mode bar)."""
    return {"displaylogo": False, "responsive": True,
            "toImageButtonOptions": {"format": "png", "filename": filename, "scale": 2},
            "modeBarButtonsToRemove": ["lasso2d", "select2d"]}
