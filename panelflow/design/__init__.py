"""Section design: inverse design from a target pressure distribution, and optimisation for
the job a section must do.

Stage of the data flow after ``study`` (a design run spreads its starting points over the study
runner's executors and writes tables, figures and a manifest with the output writers); it
imports every earlier stage and nothing imports it but the command line.

Modules, one concept each:

* ``shape``       -- the shape parametrisation: base section plus Kulfan's class function times
                     a cubic B-spline in the angle coordinate, whole section or segments
* ``sensitivity`` -- exact derivatives of the panel solution with respect to node positions
* ``model``       -- the panel model a design iterates on (nodes fixed along the section)
* ``targets``     -- target Cp or surface speed: tables and a built-in plateau
* ``inverse``     -- inverse design by constrained Gauss-Newton
* ``job``         -- the objective and constraints a designer states
* ``objectives``  -- a job as functions of the design variables, with gradients
* ``drag``        -- viscous drag at a design lift with a finite-difference gradient
* ``optimise``    -- SLSQP from several starting points over any executor
* ``check``       -- a written section read back and analysed afresh (every reported figure)
* ``report``      -- before/after tables
* ``figures``     -- start and result overlaid: Cp and polars
* ``spec``        -- design case files (TOML)
* ``run``         -- runs: design, write, check, report, manifest

Typical use::

    import panelflow as pf
    from panelflow.design import Job, InceptionSpeed, Cavitation, ThicknessLimit, optimise
    foil = pf.load_outlines("geometries/tender_front_foil.dat")[0]
    job = Job(InceptionSpeed(cl=0.6), Cavitation(depth=0.5, fluid="sea-water"),
              thickness=(ThicknessLimit(0.36, 0.36, minimum=0.1),))
    result = optimise(foil, job)            # result.outline: the optimised section
"""

from panelflow.design.check import Check, Figure, inverse_check, job_check
from panelflow.design.inverse import InverseResult, ThicknessLimit, inverse_design
from panelflow.design.job import (Cavitation, InceptionSpeed, Job, LeastDrag, Limits,
                                  MomentLimit, WidestRange)
from panelflow.design.optimise import OptimisationResult, optimise
from panelflow.design.shape import SectionForm, form_of, full_basis, segment_basis
from panelflow.design.targets import CpTarget, plateau_target, read_target

__all__ = ["Check", "Figure", "inverse_check", "job_check", "InverseResult", "ThicknessLimit",
           "inverse_design", "Cavitation", "InceptionSpeed", "Job", "LeastDrag", "Limits",
           "MomentLimit", "WidestRange", "OptimisationResult", "optimise", "SectionForm",
           "form_of", "full_basis", "segment_basis", "CpTarget", "plateau_target",
           "read_target"]
