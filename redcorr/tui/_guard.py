"""Call the core from the UI without ever letting a bad value crash the app.

Warnings: while the app runs, :func:`capture_warnings` routes every
`RedcorrWarning` to a per-thread list instead of the terminal, so that
:func:`guarded` can show them beside the result it guards. It changes the
warning filters once for the whole run (entering ``warnings.catch_warnings``
per call would not be safe with the catalog worker thread running).
"""

import contextlib
import threading
import warnings

from redcorr.exceptions import InputError, RedcorrWarning

__all__ = ["Outcome", "capture_warnings", "combine", "guarded"]

_local = threading.local()


class Outcome:
    """Result of a guarded call: ``value``, ``error`` (str or None), ``warnings`` (list of str)."""

    __slots__ = ("value", "error", "warnings")

    def __init__(self, value=None, error=None, warnings=()):
        self.value = value
        self.error = error
        self.warnings = list(warnings)

    @property
    def ok(self):
        """True when the call returned a value."""
        return self.error is None


@contextlib.contextmanager
def capture_warnings():
    """While active, RedcorrWarnings are always issued and collected by :func:`guarded`."""
    original = warnings.showwarning

    def show(message, category, filename, lineno, file=None, line=None):
        bucket = getattr(_local, "bucket", None)
        if issubclass(category, RedcorrWarning) and bucket is not None:
            bucket.append(str(message))
        elif not issubclass(category, RedcorrWarning):
            original(message, category, filename, lineno, file, line)

    with warnings.catch_warnings():
        warnings.simplefilter("always", RedcorrWarning)
        warnings.showwarning = show
        yield


def guarded(fn, *args, **kwargs):
    """Run ``fn(*args, **kwargs)``; turn user errors into a message and collect redcorr warnings.

    `InputError` and file errors become ``error`` (the core's own message);
    any other exception is reported as an unexpected failure, never raised.
    Warnings are collected when :func:`capture_warnings` is active.
    """
    outer = getattr(_local, "bucket", None)
    _local.bucket = caught = []
    try:
        value = fn(*args, **kwargs)
    except (InputError, OSError) as exc:
        return Outcome(error=str(exc), warnings=caught)
    except Exception as exc:  # noqa: BLE001 - the UI must survive anything the core raises
        return Outcome(error=f"unexpected failure: {type(exc).__name__}: {exc}", warnings=caught)
    finally:
        _local.bucket = outer
        if outer is not None:
            outer.extend(caught)
    return Outcome(value, warnings=caught)


def combine(*outcomes):
    """One outcome for several steps: the first error, and every warning once, in order."""
    error = next((o.error for o in outcomes if o.error), None)
    seen = []
    for o in outcomes:
        seen += [w for w in o.warnings if w not in seen]
    return Outcome(outcomes[-1].value, error, seen)
