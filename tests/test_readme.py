"""Every command and Python snippet of the README runs, and what it shows is what it prints.

The README's code blocks are parsed here; each block runs in a fresh folder holding a copy of
``geometries/`` (commands of one block run in order, so a later command may read an earlier
one's file, as a reader following the README would). Commands go to panelflow's own entry point
in this process (``panelflow ARGS`` and ``python -m panelflow ARGS`` alike); ``python
scripts/NAME.py`` runs the script. A command shown with its output (``$ ...`` then lines) must
print each of those lines, blanks squeezed, except ``...`` (lines left out on purpose).

Panel counts are cut to :data:`QUICK_PANELS` where a command shows no output and its meaning does
not hang on them (so the default suite stays quick); blocks that stay expensive (studies,
optimisation, the viscous analysis, long sweeps) are marked slow. Synopsis lines (with
placeholders such as ``OUTLINE``) are not runnable: every option they name must be one the
command's ``--help`` lists. The install lines are checked against ``pyproject.toml``.
"""

from __future__ import annotations

import contextlib
import io
import re
import runpy
import shlex
import shutil
import sys
import tomllib
from pathlib import Path

import pytest

from panelflow.cli.main import main

REPO = Path(__file__).resolve().parent.parent
README = REPO / "README.md"

# panels for a command whose printed numbers the README does not show (enough for every
# section the README uses to panel and solve; the meaning of the command is kept)
QUICK_PANELS = 60
PANELLED = {"solve", "compare", "field", "loads"}
QUICK_GRID = 41  # points of a field grid each way at most
# a placeholder in a synopsis line: OUTLINE, SPEC, FILE, CASE.toml, A, V, ...
PLACEHOLDER = re.compile(r"\b(OUTLINE|SPEC|CASE\.toml|FILE|START:STOP:STEP)\b")
# blocks whose commands stay expensive at any sensible size (run with -m slow)
SLOW_WORDS = ("panelflow run ", "panelflow optimise ", "panelflow inverse ", "--reynolds",
              "--viscous", "-4:10:1")


def code_blocks(text: str) -> list:
    """(language, first line number, lines) of every fenced block of the README."""
    blocks, current, lang, start = [], None, "", 0
    for number, line in enumerate(text.splitlines(), 1):
        stripped = line.strip()
        if stripped.startswith("```"):
            if current is None:
                current, lang, start = [], stripped[3:].strip(), number + 1
            else:
                blocks.append((lang, start, current))
                current = None
        elif current is not None:
            current.append(line)
    return blocks


def _indent(lines) -> int:
    return min((len(ln) - len(ln.lstrip()) for ln in lines if ln.strip()), default=0)


def shell_steps(lines) -> list:
    """(command, shown output lines) of a shell block, continuation lines joined.

    In a block with ``$`` prompts the lines after a command up to the next prompt are its output;
    without prompts every non-blank line is a command with no output shown.
    """
    cut = _indent(lines)
    lines = [ln[cut:] for ln in lines]
    prompted = any(ln.startswith("$ ") for ln in lines)
    steps, i = [], 0
    while i < len(lines):
        line = lines[i]
        i += 1
        if prompted and not line.startswith("$ "):
            if steps:
                steps[-1][1].append(line)
            continue
        if not line.strip():
            continue
        command = line[2:] if prompted else line
        while command.rstrip().endswith("\\") and i < len(lines):
            command = command.rstrip()[:-1] + " " + lines[i].strip()
            i += 1
        steps.append((command.strip(), []))
    return steps


def _words(command: str) -> list:
    return shlex.split(command, comments=True)


def _blocks_of(kind: str) -> list:
    out = []
    for lang, start, lines in code_blocks(README.read_text(encoding="utf-8")):
        if lang == "python":
            if kind == "python":
                out.append(pytest.param(start, lines, id=f"line{start}"))
            continue
        if lang or kind != "shell":
            continue
        steps = shell_steps(lines)
        if not steps or any(c.startswith("python3 -m venv") for c, _ in steps):
            continue  # the install lines: test_install_lines
        if any(PLACEHOLDER.search(c) for c, _ in steps):
            continue  # synopses: test_synopsis_options
        slow = any(w in c for c, _ in steps for w in SLOW_WORDS)
        out.append(pytest.param(start, steps, id=f"line{start}",
                                marks=[pytest.mark.slow] if slow else []))
    return out


def _synopses() -> list:
    out = []
    for lang, start, lines in code_blocks(README.read_text(encoding="utf-8")):
        if lang:
            continue
        for command, _ in shell_steps(lines):
            if PLACEHOLDER.search(command) and command.startswith("panelflow "):
                out.append(pytest.param(command, id=f"line{start}-{command.split()[1]}"))
    return out


@pytest.fixture
def folder(tmp_path, monkeypatch):
    shutil.copytree(REPO / "geometries", tmp_path / "geometries")
    monkeypatch.chdir(tmp_path)
    return tmp_path


def _quick(argv: list) -> list:
    """The same command with at most QUICK_PANELS panels and QUICK_GRID field points each way
    (panelled commands only)."""
    if not argv or argv[0] not in PANELLED:
        return argv
    argv = list(argv)
    if "--resolution" in argv:  # a coarser field grid: the same command, drawn and written
        k = argv.index("--resolution") + 1
        argv[k] = ",".join(str(min(int(v), QUICK_GRID)) for v in argv[k].split(","))
    if "--panels" in argv:
        k = argv.index("--panels") + 1
        argv[k] = str(min(int(argv[k]), QUICK_PANELS))
    else:
        argv += ["--panels", str(QUICK_PANELS)]
    return argv


def run_command(command: str, quick: bool) -> tuple:
    """(exit code, what it printed on stdout and stderr) of one README command, run the way
    the README says."""
    words = _words(command)
    if words[0] == "panelflow":
        argv = words[1:]
    elif words[:3] in (["python", "-m", "panelflow"], ["python3", "-m", "panelflow"]):
        argv = words[3:]
    elif words[0] in ("python", "python3") and words[1].startswith("scripts/"):
        out = io.StringIO()
        script = REPO / words[1]
        saved = sys.argv
        sys.argv = [str(script), *words[2:]]
        try:
            with contextlib.redirect_stdout(out):
                try:
                    runpy.run_path(str(script), run_name="__main__")
                    code = 0
                except SystemExit as exc:
                    code = exc.code or 0
        finally:
            sys.argv = saved
        return code, out.getvalue()
    else:
        raise AssertionError(f"README command of an unknown kind: {command}")
    if quick:
        argv = _quick(argv)
    out = io.StringIO()
    # what a terminal shows: the report on stdout and the "wrote FILE" lines on stderr
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(out):
        code = main(argv)
    return code, out.getvalue()


def _squeeze(line: str) -> str:
    return " ".join(line.split())


@pytest.mark.parametrize("start, steps", _blocks_of("shell"))
def test_readme_commands_run(start, steps, folder):
    for command, shown in steps:
        code, printed = run_command(command, quick=not shown)
        assert code == 0, f"README line {start}: {command!r} exited {code}"
        got = {_squeeze(ln) for ln in printed.splitlines()}
        for line in shown:
            if line.strip() in ("", "..."):
                continue
            assert _squeeze(line) in got, (f"README line {start}: {command!r} does not print "
                                           f"{line.strip()!r}; it printed:\n{printed}")


@pytest.mark.parametrize("start, lines", _blocks_of("python"))
def test_readme_python_runs(start, lines, folder, capsys):
    cut = _indent(lines)
    source = "\n".join(ln[cut:] for ln in lines)
    exec(compile(source, f"README.md line {start}", "exec"), {"__name__": "__readme__"})
    assert capsys.readouterr().err == ""


@pytest.mark.parametrize("command", _synopses())
def test_synopsis_options(command, capsys):
    words = _words(command)
    with pytest.raises(SystemExit) as exc:
        main([words[1], "--help"])
    assert exc.value.code == 0
    helptext = capsys.readouterr().out
    for option in (w.strip("[]()|") for w in words if w.strip("[]()|").startswith("-")):
        assert re.search(rf"(?<![\w-]){re.escape(option)}(?![\w-])", helptext), \
            f"{command!r}: {option} is not an option of {words[1]}"


def test_install_lines():
    """The install lines name what pyproject.toml declares: the entry point and the extras."""
    text = README.read_text(encoding="utf-8")
    project = tomllib.loads((REPO / "pyproject.toml").read_text())["project"]
    assert "panelflow" in project["scripts"]
    for extra in re.findall(r'\.\[(\w+)\]', text):
        assert extra in project["optional-dependencies"], f"README installs .[{extra}]"


def test_readme_toml_blocks_are_the_files_they_show():
    """A TOML block of the README is an excerpt of a case file in geometries/ that parses."""
    for lang, start, lines in code_blocks(README.read_text(encoding="utf-8")):
        if lang != "toml":
            continue
        shown = tomllib.loads("\n".join(lines))
        matches = []
        for path in (REPO / "geometries").glob("*.toml"):
            data = tomllib.loads(path.read_text())
            if all(data.get(k) == v for k, v in shown.items()):
                matches.append(path)
        assert matches, f"README line {start}: no case file in geometries/ holds this block"
