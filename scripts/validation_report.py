"""Write the validation report, docs/validation.md, and its figures (phasekit.calibration.report).

    python scripts/validation_report.py             # docs/validation.md and docs/validation/*.png
    python scripts/validation_report.py --no-figures

Run after the calibration scripts (DEVELOPERS.md gives the order); tests/validation/test_report.py fails when the
committed Markdown differs from what the database gives now.
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from phasekit.calibration.report import SURVEY_TEMPS, SYSTEMS, build_report, figure_name, render  # noqa: E402
from phasekit.errors import ValidityWarning  # noqa: E402
from phasekit.model import Model  # noqa: E402
from phasekit.thermo.database import Database  # noqa: E402

DOCS = ROOT / "docs"


def figures(model, rep, out_dir: Path) -> list[str]:
    """One PNG per ternary system: the model's isotherms at the survey temperatures with the measured
    invariant points (fit rows hollow, check rows filled). Returns the paths relative to docs/."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from phasekit.calibration.measurements import read_measurements
    from phasekit.calibration.report import isotherm_state, system_name
    from phasekit.chemistry.salts import parse_salt

    meas = read_measurements()
    out_dir.mkdir(parents=True, exist_ok=True)
    names = []
    colours = plt.get_cmap("viridis")
    for salts in SYSTEMS:
        fig, ax = plt.subplots(figsize=(6.0, 4.6), dpi=110)
        for i, t in enumerate(SURVEY_TEMPS):
            st = isotherm_state(model, salts, t)
            res = st["result"]
            if res is None:
                continue
            colour = colours(i / max(1, len(SURVEY_TEMPS) - 1))
            cur = res.curves[~res.curves["metastable"]]
            for _, seg in cur.groupby("curve"):
                ax.plot(seg[f"{salts[0]}_molality"], seg[f"{salts[1]}_molality"], color=colour, lw=1.2)
            ax.plot([], [], color=colour, lw=1.2, label=f"{t:g} °C" + ("" if st["complete"] else " (incomplete)"))
        rows = meas[(meas["system"] == system_name(salts)) & (meas["kind"] == "invariant")]
        for r in rows.itertuples():
            xs = []
            for salt in salts:
                ions = parse_salt(salt)
                own = [k for k in ions if all(k not in parse_salt(o) for o in salts if o != salt)]
                xs.append(r.molalities.get(own[0], 0.0) / ions[own[0]])
            ax.plot(*xs, marker="o", ms=6, color="black", mfc="black" if r.role == "check" else "white",
                    ls="none")
        ax.plot([], [], marker="o", color="black", mfc="white", ls="none", label="measured (fit)")
        ax.plot([], [], marker="o", color="black", mfc="black", ls="none", label="measured (check)")
        ax.set_xlabel(f"{salts[0]} (mol/kg water)")
        ax.set_ylabel(f"{salts[1]} (mol/kg water)")
        ax.set_title(f"{system_name(salts)}: model isotherms and measurements")
        ax.set_xlim(left=0)
        ax.set_ylim(bottom=0)
        ax.legend(fontsize=7, loc="upper right")
        fig.tight_layout()
        name = figure_name(salts)
        fig.savefig(out_dir / name, metadata={"Software": None})
        plt.close(fig)
        names.append(f"validation/{name}")
    return names


def main(with_figures: bool = True) -> None:
    model = Model(Database(ROOT / "data"))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ValidityWarning)
        rep = build_report(model)
        figs = figures(model, rep, DOCS / "validation") if with_figures else [
            f"validation/{figure_name(s)}" for s in SYSTEMS]
    DOCS.mkdir(exist_ok=True)
    (DOCS / "validation.md").write_text(render(rep, figs), encoding="utf-8")
    print(f"wrote docs/validation.md ({len(rep.checks)} check rows, {len(figs)} figures)")


if __name__ == "__main__":
    main(with_figures="--no-figures" not in sys.argv)
