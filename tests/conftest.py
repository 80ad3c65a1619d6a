"""Shared fixtures for the solver checks: exact-geometry sections and cached analyses.

The conformal-map sections are built from ``exact.py`` (independent of panelflow), so the
geometry the solver sees and the reference flow come from the same closed-form map. Analyses
are cached for the whole session: each one costs a factorisation, and several test modules ask
for the same section at the same panel count.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
import pytest
from exact import KarmanTrefftz

import json

import panelflow as pf
from panelflow.cli.main import main
from panelflow.geometry.outline import Outline

# Angles of attack for the mapped sections, degrees from the x-axis (-4 to 10 deg).
MAPPED_ALPHAS_DEG = np.arange(-4.0, 10.5, 2.0)

# Exact surface points per input outline: the solver re-panels on a cubic spline through them,
# so with 2000 points the spline's geometry error (<= 5.2e-11 of the chord, measured by mapping
# the solver's nodes back to the circle) is far below the discretisation error being checked.
EXACT_SURFACE_POINTS = 2000


@dataclass(frozen=True)
class MappedCase:
    """A Joukowski or Karman-Trefftz section with its exact flow.

    Attributes
    ----------
    name : str
        Test id.
    section : KarmanTrefftz
        Exact map and flow (``exact.py``).
    sharp_nose : bool
        Small leading-edge radius: suction peaks beyond Cp = -10 in the angle range, checked
        against a Cp tolerance scaled by the peak (see tests/test_solver_exact.py).
    """

    name: str
    section: KarmanTrefftz
    sharp_nose: bool = False

    @functools.cached_property
    def outline(self) -> Outline:
        # cached_property writes the instance __dict__ directly, which a frozen dataclass allows
        return exact_outline(self.section)

    def cl_exact(self, alpha_deg) -> np.ndarray:
        """Exact Kutta-Joukowski lift coefficient at each angle (degrees)."""
        return np.array([self.section.cl(a) for a in np.radians(np.atleast_1d(alpha_deg))])

    def cm_exact(self, alpha_deg) -> np.ndarray:
        """Exact nose-up Cm about the exact quarter chord at each angle (degrees)."""
        return np.array([self.section.cm(a) for a in np.radians(np.atleast_1d(alpha_deg))])



def exact_outline(section: KarmanTrefftz, n_points: int = EXACT_SURFACE_POINTS) -> Outline:
    """Outline through ``n_points`` exact surface points plus the exact leading edge.

    The exact leading-edge point is inserted so that the outline's own leading edge (its point
    farthest from the trailing edge) is the exact one: chord, chord line and quarter chord are
    then exact, and coefficients compare without a reference-length error.
    """
    theta = np.sort(np.r_[section.circle_angles(n_points), section.leading_edge_angle])
    pts = section.surface(theta)
    pts[0] = pts[-1] = section.trailing_edge  # the map gives the corner to round-off only
    return Outline.from_points(pts, name="exact-section", source="exact.py")


# Joukowski (tau = 0) and Karman-Trefftz sections. Circle centres chosen for 10-20 % thick
# sections with and without camber, plus two sharp-nosed ones (Re(centre) = -0.05).
MAPPED_CASES = (
    MappedCase("joukowski-cambered", KarmanTrefftz(-0.10 + 0.10j, 0.0)),
    MappedCase("joukowski-symmetric", KarmanTrefftz(-0.10 + 0.00j, 0.0)),
    MappedCase("joukowski-sharp-nose", KarmanTrefftz(-0.05 + 0.12j, 0.0), sharp_nose=True),
    MappedCase("kt-5deg", KarmanTrefftz(-0.10 + 0.05j, 5.0)),
    MappedCase("kt-10deg", KarmanTrefftz(-0.08 + 0.08j, 10.0)),
    MappedCase("kt-15deg", KarmanTrefftz(-0.12 + 0.10j, 15.0)),
    MappedCase("kt-15deg-sharp-nose", KarmanTrefftz(-0.05 + 0.05j, 15.0), sharp_nose=True),
)


@functools.cache
def _mapped_analysis(name: str, n_panels: int) -> pf.Analysis:
    case = _CASES_BY_NAME[name]
    return pf.analyse([case.outline], MAPPED_ALPHAS_DEG, n_panels=n_panels,
                      reference_point=case.section.quarter_chord)


_CASES_BY_NAME = {c.name: c for c in MAPPED_CASES}


@pytest.fixture(scope="session", params=MAPPED_CASES, ids=lambda c: c.name)
def mapped_case(request) -> MappedCase:
    """Each Joukowski / Karman-Trefftz case in turn."""
    return request.param


@pytest.fixture(scope="session")
def mapped_analysis():
    """``mapped_analysis(case, n_panels)``: cached Analysis over ``MAPPED_ALPHAS_DEG``.

    The moment reference is the exact quarter chord (which is also the outline's own, see
    :func:`exact_outline`).
    """
    def get(case: MappedCase, n_panels: int = 200) -> pf.Analysis:
        return _mapped_analysis(case.name, int(n_panels))

    return get


@pytest.fixture(scope="session")
def mapped_alphas_deg() -> np.ndarray:
    return MAPPED_ALPHAS_DEG.copy()


# ----------------------------------------------------------------------------- command line
def run(capsys, *argv):
    """Exit code, stdout and stderr of one in-process command-line run."""
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def run_json(capsys, *argv) -> dict:
    """The parsed ``--json`` output of a run that must succeed."""
    code, out, err = run(capsys, *argv, "--json")
    assert code == 0, err
    return json.loads(out)
