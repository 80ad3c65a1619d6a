"""panelflow: 2D inviscid, incompressible panel solver for foil and fairing sections.

Typical use::

    import panelflow as pf
    foil = pf.load_outlines("naca2412")
    result = pf.analyse(foil, alpha_deg=[0, 4, 8])
    print(result[1])
"""

from .analysis import Analysis, AngleResult, BodyAngleResult, alpha_for_cl, analyse
from .errors import GeometryError, InputError, OutputError, PanelflowError, SolveError
from .outline import Outline

__version__ = "0.1.0"

__all__ = [
    "Analysis", "AngleResult", "BodyAngleResult", "alpha_for_cl", "analyse", "GeometryError",
    "InputError", "OutputError", "PanelflowError", "SolveError", "Outline", "load_outlines",
    "__version__",
]


def load_outlines(spec_or_path: str):
    """Outlines from a section spec (``naca2412``) or a file; see :mod:`panelflow.readers`."""
    from .readers import load_outlines as _load

    return _load(spec_or_path)
