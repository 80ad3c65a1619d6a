"""The package's imports point one way, down the data flow (DEVELOPERS.md, architecture).

Every module's imports are read with :mod:`ast` -- at the top and inside functions -- and each
import of a panelflow module must go to the same stage or an earlier one:

    top-level modules (errors, files, version) -> geometry -> flow -> viscous -> conditions
    -> analysis -> loads -> output -> study -> design -> cli

The package root (``__init__``, ``__main__``) re-exports and may import anything.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "panelflow"
STAGES = ("", "geometry", "flow", "viscous", "conditions", "analysis", "loads", "output", "study",
          "design", "cli")
ROOT_FILES = {"__init__.py", "__main__.py"}


def _stage(module: str) -> int:
    """Stage of a dotted panelflow module name (``panelflow.flow.field`` -> flow)."""
    parts = module.split(".")
    sub = parts[1] if len(parts) > 1 and parts[1] in STAGES else ""
    return STAGES.index(sub)


def _module_name(path: Path, package: Path = PACKAGE) -> str:
    rel = path.relative_to(package.parent).with_suffix("")
    return ".".join(rel.parts)


def _imports(path: Path, root: Path = PACKAGE) -> list:
    """(line, imported panelflow module) for every import in the file."""
    tree = ast.parse(path.read_text(), str(path))
    here = _module_name(path, root).split(".")
    package = here[:-1] if path.name != "__init__.py" else here
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out += [(node.lineno, a.name) for a in node.names if a.name.startswith("panelflow")]
        elif isinstance(node, ast.ImportFrom):
            if node.level:  # relative: resolve against the package
                base = package[:len(package) - node.level + 1]
                mod = ".".join(base + ([node.module] if node.module else []))
            else:
                mod = node.module or ""
            if not mod.startswith("panelflow"):
                continue
            # "from panelflow.flow import field" imports the module panelflow.flow.field
            out += [(node.lineno, f"{mod}.{a.name}" if mod.count(".") == 1 and
                     _stage(mod) else mod) for a in node.names]
    return out


MODULES = sorted(p for p in PACKAGE.rglob("*.py") if p.name not in ROOT_FILES
                 or p.parent != PACKAGE)


@pytest.mark.parametrize("path", MODULES, ids=lambda p: str(p.relative_to(PACKAGE)))
def test_imports_point_down_the_flow(path):
    own = _stage(_module_name(path))
    upward = [f"line {line}: {mod} ({STAGES[_stage(mod)] or 'top level'})"
              for line, mod in _imports(path) if _stage(mod) > own]
    assert not upward, (f"{path.relative_to(PACKAGE)} ({STAGES[own] or 'top level'}) imports "
                        f"from a later stage: " + "; ".join(upward))


def test_every_module_sits_in_a_stage():
    for path in MODULES:
        rel = path.relative_to(PACKAGE)
        assert len(rel.parts) == 1 or rel.parts[0] in STAGES, rel


@pytest.mark.parametrize("text, upward", [
    ("from panelflow.analysis.solve import solve\n", True),
    ("def f():\n    from panelflow.output import figures\n", True),
    ("from ..output.writers import CAUTION\n", True),
    ("from panelflow.geometry.outline import Outline\nfrom panelflow import errors\n", False),
    ("from ..geometry import panels\n", False),
])
def test_the_check_sees_an_upward_import(tmp_path, text, upward):
    # the checker itself, on a probe module placed in a copy of the package's flow stage
    root = tmp_path / "panelflow"
    (root / "flow").mkdir(parents=True)
    probe = root / "flow" / "probe.py"
    probe.write_text(text)
    found = [mod for _, mod in _imports(probe, root) if _stage(mod) > STAGES.index("flow")]
    assert bool(found) == upward, found


def test_no_module_imports_its_own_importer():
    # within a stage too, the data flows one way: no chain of imports (module level or inside a
    # function) leads from a module back to itself. Imports of a subpackage's __init__ are left
    # out (a package imports its modules to re-export them).
    graph = {}
    for path in MODULES:
        if path.name == "__init__.py":
            continue
        name = _module_name(path)
        graph[name] = {mod for _, mod in _imports(path)
                       if mod != name and not (PACKAGE.parent / mod.replace(".", "/")).is_dir()}
    cycles = []
    state = {}

    def visit(node, trail):
        state[node] = "open"
        for nxt in sorted(graph.get(node, ())):
            if state.get(nxt) == "open":
                cycles.append(" -> ".join(trail[trail.index(nxt):] + [nxt]))
            elif nxt in graph and nxt not in state:
                visit(nxt, trail + [nxt])
        state[node] = "done"

    for node in sorted(graph):
        if node not in state:
            visit(node, [node])
    assert not cycles, "import cycles: " + "; ".join(cycles)
