"""Analysis: the library's entry point, from a description of the job to one result."""

from panelflow.analysis.inviscid import (Analysis, AngleResult, BodyAngleResult, alpha_for_cl,
                                         analyse)

__all__ = ["Analysis", "AngleResult", "BodyAngleResult", "alpha_for_cl", "analyse"]
