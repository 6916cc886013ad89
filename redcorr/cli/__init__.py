"""The ``redcorr`` command line: a thin shell over the library.

Each subcommand lives in its own public module of this package with two
functions, ``add_parser(subparsers)`` (which registers the subcommand and
sets ``func=run`` as its default) and ``run(args) -> int``. Adding a command
is adding such a module: they are discovered by name (modules whose names
start with an underscore are helpers, not commands).

Start-up: building the parser imports every command module, so a command
module imports at module level only the standard library,
:mod:`redcorr.exceptions`, :mod:`redcorr.cli._common` and
:mod:`redcorr._constants` (the values its options need). numpy, astropy and
the library modules are imported inside ``run`` and the functions that use
them. ``redcorr --help`` thus loads none of them, and ``redcorr COMMAND``
only what COMMAND uses (``tests/test_cli_startup.py`` checks this,
``benchmarks/bench_startup.py`` times it).

Exit status: 0 on success, 2 for a user mistake (one line on stderr, no
traceback), 1 for an unexpected failure, 130 on Ctrl-C.
"""

import argparse
import importlib
import os
import pkgutil
import sys
import traceback
import warnings

from redcorr.exceptions import InputError, RedcorrWarning

__all__ = ["main", "build_parser", "COMMANDS"]

COMMANDS = tuple(
    sorted(m.name for m in pkgutil.iter_modules(__path__) if not m.name.startswith("_"))
)
"""Names of the subcommands, one module each."""


def build_parser():
    """The argparse parser with every subcommand registered."""
    parser = argparse.ArgumentParser(
        prog="redcorr",
        description="Interstellar extinction through real filters, and reddening correction.",
    )
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for name in COMMANDS:
        importlib.import_module(f"redcorr.cli.{name}").add_parser(sub)
    return parser


def _show_warning(message, category, filename, lineno, file=None, line=None):
    print(f"redcorr: warning: {message}", file=sys.stderr)


def main(argv=None):
    """Run the command line; return the exit status.

    Parameters
    ----------
    argv : list of str, optional
        Arguments without the program name; ``sys.argv[1:]`` if omitted.
    """
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse reports usage errors with status 2
        return int(exc.code or 0)
    with warnings.catch_warnings():
        warnings.simplefilter("always", RedcorrWarning)
        warnings.showwarning = _show_warning
        try:
            return int(args.func(args) or 0)
        except (InputError, FileNotFoundError, IsADirectoryError, PermissionError) as exc:
            print(f"redcorr {args.command}: error: {exc}", file=sys.stderr)
            return 2
        except BrokenPipeError:  # e.g. piped into head
            sys.stderr.close()
            return 0
        except KeyboardInterrupt:
            print("redcorr: interrupted", file=sys.stderr)
            return 130
        except Exception as exc:
            if os.environ.get("REDCORR_DEBUG"):
                traceback.print_exc()
            print(
                f"redcorr {args.command}: unexpected failure: {type(exc).__name__}: {exc} "
                "(set REDCORR_DEBUG=1 for a traceback)",
                file=sys.stderr,
            )
            return 1
