"""Build step for the optional compiled kernels (the project metadata is in pyproject.toml).

The extension is optional: where no C compiler is available the install still succeeds and
panelflow runs its numpy kernels (same formulas, slower; see panelflow/flow/influence.py).
"""

import sys

from setuptools import Extension, setup

# -fno-trapping-math lets the compiler evaluate both sides of a selection (branch-free vector
# code); panelflow never reads floating-point exception flags.
args = [] if sys.platform == "win32" else ["-O3", "-std=c11", "-fno-trapping-math"]

setup(ext_modules=[Extension("panelflow.flow._kernels", ["panelflow/flow/_kernels.c"],
                             extra_compile_args=args, optional=True)])
