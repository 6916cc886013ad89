"""The ``redcorr`` command line: a thin shell over the library.

Each subcommand lives in its own public module of this package with two
functions, ``add_parser(subparsers)`` (which registers the subcommand and
sets ``func=run`` as its default) and ``run(args) -> int``. Adding a command
is adding such a module: they are discovered by name (modules whose names
start with an underscore are helpers, not commands).

Start-up: building the parser imports every command module, so a command
module imports at module level only the standard library,
:mod:`redcorr.exceptions`, :mod:`redcorr.cli._common`,
:mod:`redcorr._constants` (the values its options need) and
:mod:`redcorr._format` (text forms of numbers). numpy, astropy and
the library modules are imported inside ``run`` and the functions that use
them. ``redcorr --help`` thus loads none of them, and ``redcorr COMMAND``
only what COMMAND uses (``tests/test_cli_startup.py`` checks this,
``benchmarks/bench_startup.py`` times it).

Exit status (one line on stderr for each failure; a traceback only with
``REDCORR_DEBUG=1``):

===  =====================================================================
0    done
1    unexpected failure (a bug: please report it)
2    the user's input or arguments: a bad value (the line names the
     argument, the value and what is allowed), an input file named by the
     user that does not exist, an output that exists without
     ``--overwrite`` (also when another run created it meanwhile)
3    the environment: disk full, quota exceeded, permission denied
     (reading or writing), read-only file system; the line names the path
130  interrupted: Ctrl-C (SIGINT), SIGTERM or SIGHUP; temporary files are
     removed and no partial output is left
===  =====================================================================
"""

import argparse
import importlib
import os
import pkgutil
import signal
import sys
import threading
import traceback
import warnings

from redcorr.exceptions import InputError, RedcorrWarning

__all__ = ["main", "console", "build_parser", "COMMANDS"]

COMMANDS = tuple(
    sorted(m.name.replace("_", "-") for m in pkgutil.iter_modules(__path__) if not m.name.startswith("_"))
)
"""Names of the subcommands, one module each (the module's name with ``-`` for ``_``)."""


def build_parser():
    """The argparse parser with every subcommand registered."""
    parser = argparse.ArgumentParser(
        prog="redcorr",
        description="Interstellar extinction through real filters, and reddening correction.",
    )
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for name in COMMANDS:
        importlib.import_module(f"redcorr.cli.{name.replace('-', '_')}").add_parser(sub)
    return parser


def _show_warning(message, category, filename, lineno, file=None, line=None):
    print(f"redcorr: warning: {message}", file=sys.stderr)


_SIGNALS = tuple(sig for sig in (getattr(signal, n, None) for n in ("SIGINT", "SIGTERM", "SIGHUP")) if sig)
"""Signals that stop a run the way Ctrl-C does."""


def _interrupt(signum, frame):
    """Signal handler: stop the main thread as Ctrl-C does, so that clean-up code runs.

    Once: later signals are ignored, so that a second one cannot cut the
    clean-up (removing temporaries) short; ``main`` restores the handlers.
    """
    for sig in _SIGNALS:
        signal.signal(sig, signal.SIG_IGN)
    raise KeyboardInterrupt


def _catch_signals():
    """Treat SIGTERM and SIGHUP as SIGINT; return the previous handlers, to restore."""
    if threading.current_thread() is not threading.main_thread():
        return {}
    return {sig: signal.signal(sig, _interrupt) for sig in _SIGNALS}


def _environment_problem(exc):
    """One line for an OSError caused by the environment (disk, permissions), else None."""
    from redcorr.io._atomic import ENVIRONMENT_ERRNOS, error_code  # noqa: PLC0415 - only on failure

    code = error_code(exc)
    if code not in ENVIRONMENT_ERRNOS:
        return None
    if exc.filename is None:  # pyarrow's message names the path
        return str(exc)
    return f"{str(exc.filename)!r}: {os.strerror(code)}"


def console():
    """Entry point of the ``redcorr`` program and ``python -m redcorr``: exit with :func:`main`'s status.

    After an interrupt, the run has already removed its temporaries on the
    way out; the process then ends at once (``os._exit``), without waiting
    for worker threads of the libraries that an interrupt may have left
    blocked, which could otherwise keep it alive.

    Signals are handled from the start of :func:`main`, before numpy and
    the other large libraries load. Before that (Python's start-up and the
    import of this module, standard library only: some tens of ms) a
    Ctrl-C ends with Python's own traceback: the installed ``redcorr``
    script imports this module before any redcorr code runs, and setting a
    handler when the module is imported would change Ctrl-C for every
    program that imports it. ``python -m redcorr`` catches that window too
    (:mod:`redcorr.__main__`).
    """
    status = main()
    if status == 130:
        sys.stdout.flush()
        sys.stderr.flush()
        os._exit(130)
    sys.exit(status)


def main(argv=None):
    """Run the command line; return the exit status (see the package docstring).

    Parameters
    ----------
    argv : list of str, optional
        Arguments without the program name; ``sys.argv[1:]`` if omitted.
    """
    previous = {}
    try:
        previous = _catch_signals()
        return _run(argv)
    except KeyboardInterrupt:  # also during start-up, and from SIGTERM or SIGHUP
        print("redcorr: interrupted", file=sys.stderr)
        return 130
    finally:
        for sig, handler in previous.items():
            signal.signal(sig, handler)


def _run(argv):
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
        except InputError as exc:
            print(f"redcorr {args.command}: error: {exc}", file=sys.stderr)
            return 2
        except BrokenPipeError:  # e.g. piped into head
            sys.stderr.close()
            return 0
        except OSError as exc:
            problem = _environment_problem(exc)
            if os.environ.get("REDCORR_DEBUG"):
                traceback.print_exc()
            if problem is not None:
                print(f"redcorr {args.command}: error: {problem}", file=sys.stderr)
                return 3
            if isinstance(exc, (FileNotFoundError, IsADirectoryError, NotADirectoryError)):  # a path the user named
                print(f"redcorr {args.command}: error: {exc}", file=sys.stderr)
                return 2
            return _unexpected(args, exc)
        except Exception as exc:
            if os.environ.get("REDCORR_DEBUG"):
                traceback.print_exc()
            return _unexpected(args, exc)


def _unexpected(args, exc):
    print(
        f"redcorr {args.command}: unexpected failure: {type(exc).__name__}: {exc} "
        "(set REDCORR_DEBUG=1 for a traceback)",
        file=sys.stderr,
    )
    return 1
