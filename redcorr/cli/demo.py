"""``redcorr demo``: the invented Brume Field scenario, end to end."""

import importlib
import pkgutil

from redcorr._paths import project_dir
from redcorr.cli import _demo
from redcorr.io._toml import load_toml

__all__ = ["add_parser", "run"]


def add_parser(sub):
    p = sub.add_parser(
        "demo",
        help="run the bundled, invented Brume Field scenario",
        description="Show what redcorr does on the invented Brume Field scenario in demo/.",
    )
    p.set_defaults(func=run)


def _sections():
    names = sorted(m.name for m in pkgutil.iter_modules(_demo.__path__) if m.name.startswith("s"))
    return [importlib.import_module(f"redcorr.cli._demo.{n}").section for n in names]


def run(args):
    demo_dir = project_dir("demo")
    scn = load_toml(demo_dir / "scenario.toml", what="demo scenario")
    print(f"# redcorr demo: the {scn['field']['name']} behind the {scn['cloud']['name']} (invented)\n")
    for section in _sections():
        section(scn, demo_dir)
        print()
    return 0
