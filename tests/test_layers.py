"""The core never imports the edge, and the terminal UI never imports the command line.

redcorr is built in layers (DEVELOPERS.md, "Architecture in one picture"):

* the **core**, every module of ``redcorr`` except ``redcorr.io``,
  ``redcorr.cli``, ``redcorr.tui`` and ``redcorr.__main__``, computes with
  objects: curves, bands, spectra, grain models, maps, DataFrames, figures;
* the **edge**: ``redcorr.io`` turns names and files into those objects and
  writes results; ``redcorr.cli`` and ``redcorr.tui`` are the shells people
  drive.

Dependencies point inward: the edge imports the core, never the reverse. The
core can then be used and tested without files or a terminal, and no import
cycle can form between the layers (keeping inner layers free of outer ones is
common practice, no source). So a core module imports neither ``redcorr.io``,
``redcorr.cli`` nor ``redcorr.tui`` anywhere (at the top, inside a function,
or as ``importlib.import_module("redcorr.io...")``), and never textual, the UI
toolkit. The two shells are siblings: the terminal UI does not import the
command line (values both need live in the core or in ``redcorr._constants``).
``redcorr/__init__.py`` is core too; its lazy name table holds io module
names as strings, which import nothing until a user asks for the name.

Imports are read with :mod:`ast` from each module's source, so those inside
functions count. The modules are listed from the package's folders
(:func:`pkgutil.iter_modules`, which imports nothing), so a module that fails
to import still has its source checked; every module is then imported once.
"""

import ast
import importlib
import importlib.util
import pkgutil
from pathlib import Path

import pytest

import redcorr

EDGE = ("redcorr.io", "redcorr.cli", "redcorr.tui")
UI_TOOLKITS = ("textual",)
RUNS_ON_IMPORT = "redcorr.__main__"  # `python -m redcorr`: importing it runs the command line


def _walk(folders, prefix):
    """``(name, source file, is a package)`` of every module under ``folders``, found without importing any."""
    for info in pkgutil.iter_modules(folders, prefix):
        yield info.name, info.module_finder.find_spec(info.name).origin, info.ispkg
        if info.ispkg:
            yield from _walk([str(Path(folder) / info.name.rpartition(".")[2]) for folder in folders], info.name + ".")


SOURCES = {"redcorr": (redcorr.__file__, True)} | {
    name: (origin, ispkg) for name, origin, ispkg in _walk(redcorr.__path__, "redcorr.")
}
MODULES = sorted(SOURCES)


def _within(name, packages):
    return any(name == p or name.startswith(p + ".") for p in packages)


CORE = [m for m in MODULES if not _within(m, EDGE + (RUNS_ON_IMPORT,))]
TUI = [m for m in MODULES if _within(m, ("redcorr.tui",))]


def _is_import_call(func):
    """``importlib.import_module(...)``, ``import_module(...)`` or ``__import__(...)``."""
    name = func.attr if isinstance(func, ast.Attribute) else getattr(func, "id", None)
    return name in ("import_module", "__import__")


def imported_names(source, package):
    """Every module name ``source`` imports, anywhere in it, as ``(name, line)``.

    ``from a import b`` gives both ``a`` and ``a.b`` (``b`` may be a module);
    relative imports are resolved against ``package``; a call of
    ``importlib.import_module`` or ``__import__`` with a literal string counts.
    """
    found = []
    for node in ast.walk(ast.parse(source)):
        if isinstance(node, ast.Import):
            found += [(alias.name, node.lineno) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module
            if node.level:
                base = importlib.util.resolve_name("." * node.level + (node.module or ""), package)
            found.append((base, node.lineno))
            found += [(f"{base}.{alias.name}", node.lineno) for alias in node.names]
        elif (
            isinstance(node, ast.Call)
            and _is_import_call(node.func)
            and node.args
            and isinstance(node.args[0], ast.Constant)
            and isinstance(node.args[0].value, str)
        ):
            found.append((node.args[0].value, node.lineno))
    return found


def module_imports(module):
    """`imported_names` of a module's source file, read without importing it."""
    origin, ispkg = SOURCES[module]
    return imported_names(Path(origin).read_text(encoding="utf-8"), module if ispkg else module.rpartition(".")[0])


def _offending(module, packages):
    """The first offending name on each line of ``module`` that imports from ``packages``."""
    bad = {}
    for name, line in module_imports(module):
        if _within(name, packages):
            bad.setdefault(line, name)
    return [f"{name} (line {line})" for line, name in sorted(bad.items())]


def test_the_reader_sees_every_kind_of_import():
    # the checks below are only as good as this reader: top-level, aliased, relative and
    # function-local imports, and import_module with a string, must all be seen
    source = (
        "import redcorr.io.grains as g\n"
        "from redcorr import cli\n"
        "def f():\n"
        "    from .tui import app\n"
        "    import importlib\n"
        "    return importlib.import_module('textual.widgets')\n"
    )
    names = {name for name, _ in imported_names(source, "redcorr")}
    assert {"redcorr.io.grains", "redcorr.cli", "redcorr.tui", "redcorr.tui.app", "textual.widgets"} <= names


def test_the_listing_covers_every_layer():
    for name in ("redcorr.grains.model", "redcorr.io.grains", "redcorr.cli.grain", "redcorr.tui.app"):
        assert name in MODULES
    assert "redcorr.grains.model" in CORE and "redcorr.io.grains" not in CORE
    assert "redcorr.tui.app" in TUI


@pytest.mark.parametrize("module", [m for m in MODULES if m != RUNS_ON_IMPORT])
def test_every_module_imports(module):
    importlib.import_module(module)


@pytest.mark.parametrize("module", CORE)
def test_core_does_not_import_the_edge(module):
    bad = _offending(module, EDGE)
    assert not bad, f"core module {module} imports the edge: {', '.join(bad)}; resolve names in redcorr.io"


@pytest.mark.parametrize("module", CORE)
def test_core_does_not_import_a_ui_toolkit(module):
    bad = _offending(module, UI_TOOLKITS)
    assert not bad, f"core module {module} imports a UI toolkit: {', '.join(bad)}"


@pytest.mark.parametrize("module", TUI)
def test_tui_does_not_import_the_cli(module):
    bad = _offending(module, ("redcorr.cli",))
    assert not bad, f"TUI module {module} imports the command line: {', '.join(bad)}"
