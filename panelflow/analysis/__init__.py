"""Analysis: the library's entry point, from a description of the job to one result.

:mod:`~panelflow.analysis.problem` holds the description (:class:`Problem`, :class:`OperatingPoint`),
:mod:`~panelflow.analysis.solve` the entry point :func:`solve`, :mod:`~panelflow.analysis.result`
the :class:`Result`; :mod:`~panelflow.analysis.inviscid` the inviscid solution with its error
estimate that every result contains.
"""

from panelflow.analysis.inviscid import (Analysis, AngleResult, BodyAngleResult, alpha_for_cl,
                                         analyse)
from panelflow.analysis.problem import Flap, OperatingPoint, Problem
from panelflow.analysis.result import Result
from panelflow.analysis.solve import solve

__all__ = ["Analysis", "AngleResult", "BodyAngleResult", "alpha_for_cl", "analyse", "Flap",
           "OperatingPoint", "Problem", "Result", "solve"]
