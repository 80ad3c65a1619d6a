"""Old module paths (``panelflow.analysis`` … before the package was split into subpackages).

``import panelflow.boundaries`` and the like keep working for one release: the old name is an
alias of the new module, with a DeprecationWarning naming the new path.
"""

from __future__ import annotations

import importlib
import importlib.abc
import importlib.util
import sys
import warnings

MOVED = {
    "bodies": "geometry.arguments", "boundaries": "flow.images", "cases": "study.cases",
    "cavitation": "conditions.cavitation", "check": "geometry.check",
    "compressibility": "conditions.compressibility", "families": "geometry.families",
    "field": "flow.field", "field_io": "output.field_files", "flap": "geometry.flap",
    "fluids": "conditions.fluids", "influence": "flow.influence", "loads_io": "output.load_files",
    "outline": "geometry.outline", "panelling": "geometry.panelling", "panels": "geometry.panels",
    "plots": "output.figures", "polars": "output.tables", "readers": "geometry.readers",
    "report": "output.report", "sections": "geometry.sections", "solver": "flow.solver",
    "streamlines": "flow.streamlines", "study": "study.runner", "surface": "flow.surface",
    "writers": "output.writers",
}


class _Alias(importlib.abc.MetaPathFinder, importlib.abc.Loader):
    """Finds ``panelflow.<old>`` and hands out the module at its new path."""

    def find_spec(self, fullname, path=None, target=None):
        prefix, _, name = fullname.partition(".")
        if prefix != "panelflow" or name not in MOVED:
            return None
        return importlib.util.spec_from_loader(fullname, self)

    def create_module(self, spec):
        new = "panelflow." + MOVED[spec.name.partition(".")[2]]
        warnings.warn(f"{spec.name} has moved to {new}; the old path will be removed",
                      DeprecationWarning, stacklevel=3)
        return importlib.import_module(new)

    def exec_module(self, module):
        pass


def install() -> None:
    """Put the alias finder on ``sys.meta_path`` once."""
    if not any(isinstance(f, _Alias) for f in sys.meta_path):
        sys.meta_path.append(_Alias())
