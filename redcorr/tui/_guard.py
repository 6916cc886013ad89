"""Call the core from the UI without ever letting a bad value crash the app."""

import warnings

from redcorr.exceptions import InputError, RedcorrWarning

__all__ = ["Outcome", "combine", "guarded"]


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


def guarded(fn, *args, **kwargs):
    """Run ``fn(*args, **kwargs)``; turn user errors into a message and collect redcorr warnings.

    `InputError` and file errors become ``error`` (the core's own message);
    any other exception is reported as an unexpected failure, never raised.
    Every `RedcorrWarning` is recorded instead of being shown or raised.
    """
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", RedcorrWarning)
        try:
            value = fn(*args, **kwargs)
        except (InputError, OSError) as exc:
            return Outcome(error=str(exc), warnings=_messages(caught))
        except Exception as exc:  # noqa: BLE001 - the UI must survive anything the core raises
            return Outcome(error=f"unexpected failure: {type(exc).__name__}: {exc}", warnings=_messages(caught))
    return Outcome(value, warnings=_messages(caught))


def _messages(caught):
    return [str(w.message) for w in caught if issubclass(w.category, RedcorrWarning)]


def combine(*outcomes):
    """One outcome for several steps: the first error, and every warning once, in order."""
    error = next((o.error for o in outcomes if o.error), None)
    seen = []
    for o in outcomes:
        seen += [w for w in o.warnings if w not in seen]
    return Outcome(outcomes[-1].value, error, seen)
