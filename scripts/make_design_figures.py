"""Make the README's section-design examples: the tender's front foil made to cavitate later at
the same thickness, once by inverse design and once by optimisation.

Both start from geometries/tender_front_foil.dat (invented demo data). The inverse design asks
for a flat suction plateau on the upper surface at the cruise lift; the optimisation runs
geometries/tender_front_foil_design.toml. Importing computes nothing; run
``python scripts/make_design_figures.py`` to rewrite scripts/figures/front_foil_inverse_cp.png,
front_foil_design_cp.png and front_foil_design_polars.png and print the tables the README
quotes (about half a minute).
"""

from __future__ import annotations

import shutil
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
FIGURES = HERE / "figures"
GEOMETRY = ROOT / "geometries" / "tender_front_foil.dat"
CASE = ROOT / "geometries" / "tender_front_foil_design.toml"


def inverse_example(folder: Path):
    """The README's inverse design, as ``panelflow inverse geometries/tender_front_foil.dat
    --plateau -0.64,0.04,0.45,0.8 --cl 0.6 --keep-thickness-at 0.36 -o ... --plot ...``."""
    from panelflow.cli.main import main

    out = folder / "front_foil_inverse.dat"
    fig = folder / "front_foil_inverse_cp.png"
    code = main(["inverse", str(GEOMETRY), "--plateau", "-0.64,0.04,0.45,0.8", "--cl", "0.6",
                 "--keep-thickness-at", "0.36", "-o", str(out), "--plot", str(fig)])
    if code != 0:
        raise SystemExit(code)
    return fig


def optimisation_example(folder: Path):
    """The README's optimisation: ``panelflow optimise geometries/tender_front_foil_design.toml
    -o ...`` (starts in this process: the same bits as with --workers)."""
    from panelflow.cli.main import main

    code = main(["optimise", str(CASE), "-o", str(folder / "front_foil_design")])
    if code != 0:
        raise SystemExit(code)
    return folder / "front_foil_design"


if __name__ == "__main__":
    sys.path.insert(0, str(ROOT))
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        fig = inverse_example(work)
        shutil.copy(fig, FIGURES / fig.name)
        done = optimisation_example(work)
        for name in ("front_foil_design_cp.png", "front_foil_design_polars.png"):
            shutil.copy(done / name, FIGURES / name)
    print(f"wrote the figures into {FIGURES}")
