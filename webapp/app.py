"""The phasekit Dash application.

This first version shows the model's water activity and osmotic coefficient for a
brine typed by the user; the diagram, path and pond views come with later work.
It holds no thermodynamics: every number comes from the phasekit library.
"""

from __future__ import annotations

from dash import Dash, Input, Output, State, dcc, html

import phasekit as pk
from phasekit.errors import PhasekitError

CAUTION = (
    "Estimates from a thermodynamic model: confirm them by laboratory tests. Hot brines and "
    "crystallizers, pond dikes and brine discharge are governed by local codes and licensed "
    "engineering practice."
)


def create_app() -> Dash:
    app = Dash(__name__, title="phasekit")
    app.layout = html.Div(
        [
            html.H1("phasekit — brine activity"),
            html.Label("Temperature (°C)"),
            dcc.Input(id="temp", type="text", value="25"),
            html.Label("Brine, mol per kg water (species=value, comma separated)"),
            dcc.Input(id="brine", type="text", value="Na=6, Cl=6", style={"width": "30em"}),
            html.Button("Compute", id="go"),
            html.Div(id="result"),
            html.Footer(CAUTION, id="caution"),
        ]
    )

    @app.callback(Output("result", "children"), Input("go", "n_clicks"), State("temp", "value"),
                  State("brine", "value"))
    def _compute(_, temp, text):
        try:
            t = float(temp)
            comp = {}
            for part in (text or "").split(","):
                if part.strip():
                    k, _, v = part.partition("=")
                    comp[k.strip()] = float(v)
            r = pk.default_model().activity(comp, t)
        except (PhasekitError, ValueError) as exc:
            return html.Div(str(exc), className="error")
        return html.Div(f"water activity {r.water_activity:.4f}, osmotic coefficient {r.osmotic:.4f}, "
                        f"ionic strength {r.ionic_strength:.3f} mol/kg")

    return app


def run(host: str = "127.0.0.1", port: int = 8050, debug: bool = False) -> None:
    """Serve the app (loopback by default)."""
    create_app().run(host=host, port=port, debug=debug)
