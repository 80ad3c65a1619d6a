"""Make the README's example figures from the demo front-foil section.

Importing computes nothing; run ``python scripts/make_readme_figures.py`` to rewrite
``scripts/figures/*.png``.
"""

from __future__ import annotations

from pathlib import Path

HERE = Path(__file__).resolve().parent
GEOMETRY = HERE.parent / "geometries" / "tender_front_foil.dat"
OUT = HERE / "figures"


def make(out: Path = OUT) -> list[Path]:
    """Write the surface-Cp and field figures of the demo front foil at 4 degrees."""
    import panelflow as pf
    from panelflow.flow.field import flow_field, grid_points
    from panelflow.output.figures import field_figure, surface_cp_figure
    from panelflow.flow.streamlines import streamlines

    foil = pf.load_outlines(str(GEOMETRY))
    result = pf.analyse(foil, [4.0])
    out.mkdir(exist_ok=True)
    written = [surface_cp_figure(result, out / "front_foil_cp.png", 4.0, overwrite=True)]
    window = (-0.5, 1.5, -0.5, 0.5)
    points, shape = grid_points(window, (201, 101))
    system = result.fine.system
    field = flow_field(system, points, [4.0], shape)
    lines = streamlines(system, 4.0, window, n=17)
    written.append(field_figure(field, foil, out / "front_foil_field.png", streamlines=lines,
                                overwrite=True))
    return written


if __name__ == "__main__":
    for path in make():
        print(f"wrote {path}")
