"""Exceptions and warnings raised by redcorr.

All warnings derive from :class:`RedcorrWarning`, so a user can silence or
escalate them with one filter::

    import warnings
    from redcorr.exceptions import RedcorrWarning
    warnings.simplefilter("error", RedcorrWarning)
"""

__all__ = [
    "InputError",
    "UnknownNameError",
    "RedcorrWarning",
    "ExtrapolationWarning",
    "OutOfRangeWarning",
    "TruncatedBandWarning",
    "ThroughputWarning",
    "DistanceIgnoredWarning",
    "FitWarning",
]


class InputError(ValueError):
    """A value given by the user is not allowed.

    The message always names the argument, the value and what is allowed.
    The command line turns it into one line on stderr and exit status 2.
    """


class UnknownNameError(InputError, KeyError):
    """A name (law, band, material, ...) is not known; the message suggests close matches."""

    def __str__(self):  # KeyError would otherwise quote the message
        return str(self.args[0]) if self.args else ""


class RedcorrWarning(UserWarning):
    """Base class of every warning redcorr emits."""


class ExtrapolationWarning(RedcorrWarning):
    """A law is being evaluated outside the range over which it was derived."""


class OutOfRangeWarning(RedcorrWarning):
    """A parameter lies outside the span of the data a law was fitted to."""


class TruncatedBandWarning(RedcorrWarning):
    """A band's response does not fall to (near) zero at an end of its wavelength range."""


class ThroughputWarning(RedcorrWarning):
    """An instrument's system throughput looks normalised rather than absolute (exposure planning)."""


class DistanceIgnoredWarning(RedcorrWarning):
    """A distance was given for a map without distances: it gives the whole sight line's reddening."""


class FitWarning(RedcorrWarning):
    """Fitted reddening that could mislead: stars flagged as unfitted, at an edge, bimodal or poorly fitted."""
