"""panelflow: 2D inviscid, incompressible panel solver for foil and fairing sections.

Typical use::

    import panelflow as pf
    foil = pf.load_outlines("naca2412")
    problem = pf.Problem(foil, pf.OperatingPoint(alpha_deg=[0, 4, 8], mach=0.3))
    result = pf.solve(problem)
    print(result[1], result.compressibility.critical_mach)

``pf.analyse(outlines, alpha_deg)`` remains the short way to the inviscid solution alone.
"""

from panelflow import _moved
from panelflow.analysis.inviscid import (Analysis, AngleResult, BodyAngleResult, alpha_for_cl,
                                         analyse)
from panelflow.analysis.problem import Flap, OperatingPoint, Problem
from panelflow.analysis.result import Result
from panelflow.analysis.solve import solve
from panelflow.errors import GeometryError, InputError, OutputError, PanelflowError, SolveError
from panelflow.flow.images import Boundary
from panelflow.geometry.outline import Outline
from panelflow.version import __version__

_moved.install()

__all__ = [
    "Analysis", "AngleResult", "BodyAngleResult", "alpha_for_cl", "analyse", "GeometryError",
    "InputError", "OutputError", "PanelflowError", "SolveError", "Outline", "load_outlines",
    "__version__", "Problem", "OperatingPoint", "Flap", "Boundary", "Result", "solve",
]


def load_outlines(spec_or_path: str):
    """Outlines from a section spec (``naca2412``) or a file; see :mod:`panelflow.geometry.readers`."""
    from panelflow.geometry.readers import load_outlines as _load

    return _load(spec_or_path)


def __getattr__(name):
    # pf.<old module name> (before the subpackages) still resolves, with a DeprecationWarning
    if name in _moved.MOVED:
        import importlib

        return importlib.import_module(f"panelflow.{name}")
    raise AttributeError(f"module 'panelflow' has no attribute {name!r}")
