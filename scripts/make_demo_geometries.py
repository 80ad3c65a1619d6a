"""Write the invented demo outlines of the foiling work tender into ``geometries/``.

The shapes come from simple smooth formulas of our own (no published coordinate file is used).
Run ``python scripts/make_demo_geometries.py [FOLDER]``; importing this module writes nothing.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

HEADER = [
    "# Invented demo data of the electric foiling work tender project (panelflow).",
    "# Made by scripts/make_demo_geometries.py from smooth formulas of our own; not a published",
    "# section and not a drawing of any built part. Not for manufacture or load assessment.",
]


# ---------------------------------------------------------------------------------- formulas
def stations(n: int) -> np.ndarray:
    """Half-cosine chord stations 0..1 (dense at both edges)."""
    return 0.5 * (1.0 - np.cos(np.linspace(0.0, np.pi, n)))


def teardrop_thickness(x: np.ndarray, t: float, tail: float = 0.0) -> np.ndarray:
    """Half-thickness ``A sqrt(x) (1 - x)(1 + tail x)`` scaled so the full thickness peaks at t.

    ``sqrt(x)`` gives a round nose, ``(1 - x)`` a sharp tail with a finite wedge angle; ``tail``
    moves the thickest point aft.
    """
    shape = np.sqrt(x) * (1.0 - x) * (1.0 + tail * x)
    fine = np.linspace(0.0, 1.0, 20001)
    peak = np.max(np.sqrt(fine) * (1.0 - fine) * (1.0 + tail * fine))
    return 0.5 * t * shape / peak


def mean_line(x: np.ndarray, h: float, aft: float = 0.0):
    """Camber ``y_c = C x (1 - x)(1 + aft x)`` with peak ``h``, and its slope."""
    fine = np.linspace(0.0, 1.0, 20001)
    peak = np.max(fine * (1.0 - fine) * (1.0 + aft * fine))
    c = h / peak
    yc = c * x * (1.0 - x) * (1.0 + aft * x)
    dyc = c * (1.0 - 2.0 * x + aft * (2.0 * x - 3.0 * x**2))
    return yc, dyc


def surfaces(x, yt, yc=None, dyc=None):
    """Upper and lower surfaces (each LE -> TE), thickness laid off normal to the mean line."""
    if yc is None:
        yc = dyc = np.zeros_like(x)
    th = np.arctan(dyc)
    upper = np.column_stack([x - yt * np.sin(th), yc + yt * np.cos(th)])
    lower = np.column_stack([x + yt * np.sin(th), yc - yt * np.cos(th)])
    return upper, lower


def loop(upper: np.ndarray, lower: np.ndarray) -> np.ndarray:
    """Layout (a): upper TE -> LE -> lower TE, LE once."""
    return np.vstack([upper[::-1], lower[1:]])


def front_foil(n: int = 81) -> np.ndarray:
    """Cambered front hydrofoil section: 10 % thick, 3.5 % camber, sharp trailing edge."""
    x = stations(n)
    yc, dyc = mean_line(x, 0.035, aft=-0.3)
    return loop(*surfaces(x, teardrop_thickness(x, 0.10, tail=0.2), yc, dyc))


def stabiliser(n: int = 61):
    """Symmetric 9 % rear stabiliser section, returned as (upper, lower) from LE to TE."""
    x = stations(n)
    return surfaces(x, teardrop_thickness(x, 0.09, tail=0.4))


def strut_fairing(n: int = 81, chord_mm: float = 220.0) -> np.ndarray:
    """Symmetric 13 % strut fairing with a cut-off trailing edge 1.5 % of chord high, in mm."""
    x = stations(n)
    gap = 0.015
    # linear term opens the tail to the base height; the rest is the teardrop shape
    yt = 0.5 * gap * x + teardrop_thickness(x, 0.13 - gap * 0.4, tail=0.5)
    return chord_mm * loop(*surfaces(x, yt))


def mast_fairing(n: int = 97, chord_mm: float = 100.0, thick_mm: float = 42.0) -> np.ndarray:
    """Rounded symmetric mast fairing (round nose, round tail), in mm.

    ``y = B sqrt(x (1 - x)) (1 - 0.55 x)``: an ellipse made egg-shaped so the tail is finer.
    """
    s = np.linspace(0.0, 2.0 * np.pi, n)  # parameter round the body, x = (1 + cos s)/2
    x = 0.5 * (1.0 + np.cos(s))
    shape = 0.5 * np.abs(np.sin(s)) * (1.0 - 0.55 * x)
    fine = np.linspace(0.0, np.pi, 20001)
    peak = np.max(0.5 * np.sin(fine) * (1.0 - 0.55 * 0.5 * (1.0 + np.cos(fine))))
    y = np.sign(np.sin(s)) * 0.5 * (thick_mm / chord_mm) * shape / peak
    pts = chord_mm * np.column_stack([x, y])
    pts[-1] = pts[0]  # close exactly at the tail
    return pts


def flap(n: int = 41, chord: float = 0.30, deflection_deg: float = 10.0,
         le=(1.02, -0.035)) -> np.ndarray:
    """Small symmetric flap (12 % of its chord) behind the main foil, trailing edge down."""
    x = stations(n)
    pts = chord * loop(*surfaces(x, teardrop_thickness(x, 0.12)))
    a = np.radians(deflection_deg)
    rot = np.array([[np.cos(a), np.sin(a)], [-np.sin(a), np.cos(a)]])  # clockwise: TE down
    return np.asarray(le) + pts @ rot.T


# ---------------------------------------------------------------------------------- writers
def _rows(pts: np.ndarray, sep: str = " ") -> list[str]:
    return [f"{x:.6f}{sep}{y:.6f}" if sep == "," else f"{x:10.6f}{sep}{y:10.6f}"
            for x, y in pts]


def write_all(folder: Path) -> list[Path]:
    """Write every demo file into ``folder``; returns the paths written."""
    folder.mkdir(parents=True, exist_ok=True)
    files = {}

    files["tender_front_foil.dat"] = [
        "Tender front foil section",
        *HEADER,
        "# Units: chord-scaled (x/c, y/c), chord 1. Layout: one loop from the trailing edge",
        "# over the upper surface and the leading edge back along the lower surface.",
        *_rows(front_foil()),
    ]

    upper, lower = stabiliser()
    files["tender_stabiliser.dat"] = [
        "Tender rear stabiliser section",
        *HEADER,
        "# Units: chord-scaled (x/c, y/c), chord 1. Layout: count line, then the upper and the",
        "# lower surface, each from the leading edge to the trailing edge.",
        f"{len(upper)}. {len(lower)}.",
        "",
        *_rows(upper),
        "",
        *_rows(lower),
    ]

    files["tender_strut_fairing.dat"] = [
        "Tender strut fairing, cut-off tail",
        *HEADER,
        "# Units: mm, chord 220 mm, thickness about 13 % of chord, blunt base 3.3 mm high.",
        "# Layout: one loop from the upper tail corner round the nose to the lower tail corner.",
        *_rows(strut_fairing()),
    ]

    files["mast_fairing.csv"] = [
        "Wind-sensor mast fairing (wheelhouse roof)",
        *HEADER,
        "# Units: mm, chord 100 mm, thickness 42 mm, rounded nose and tail; in air.",
        "# Comma-separated x,y; one loop starting and ending at the tail.",
        "x_mm,y_mm",
        *_rows(mast_fairing(), sep=","),
    ]

    files["front_foil_with_flap.dat"] = [
        *HEADER,
        "# Two bodies: each starts with its title line after a blank line.",
        "# Units: chord-scaled by the main element's chord (1). Flap chord 0.30, 10 deg down,",
        "# leading edge at (1.02, -0.035), clear of the main element.",
        "Front foil main element",
        *_rows(front_foil()),
        "",
        "Front foil flap",
        *_rows(flap()),
    ]

    written = []
    for name, lines in files.items():
        path = folder / name
        path.write_text("\n".join(lines) + "\n", encoding="utf-8")
        written.append(path)
    return written


def main(argv: list[str] | None = None) -> int:
    args = sys.argv[1:] if argv is None else argv
    folder = Path(args[0]) if args else Path(__file__).resolve().parent.parent / "geometries"
    for path in write_all(folder):
        sys.stdout.write(f"wrote {path.name}\n")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
