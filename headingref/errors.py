"""One exception family for everything a user can get wrong.

The CLI turns any :class:`HeadingrefError` into one line on stderr and a non-zero
exit status; nothing else is caught silently.
"""

from __future__ import annotations


class HeadingrefError(Exception):
    """Base class of every error headingref raises on purpose."""


class InputError(HeadingrefError, ValueError):
    """A value given by the user is malformed or out of range.

    The message names the value (and the row or field where it came from) and
    says what is accepted.
    """


class DateRangeError(InputError):
    """A date lies outside the validity of the field model in use."""


class ModelFileError(HeadingrefError):
    """A coefficient file is missing, unreadable or malformed."""


class HeadingrefWarning(UserWarning):
    """Base class of headingref's warnings."""


class ExtrapolationWarning(HeadingrefWarning):
    """A model is being evaluated outside its validity because the caller opted in."""


class UndefinedDeclinationWarning(HeadingrefWarning):
    """Declination is undefined at some places (geographic pole or H = 0)."""


class DataQualityWarning(HeadingrefWarning):
    """Input was accepted but looks suspect (e.g. ill-determined fit, odd distances)."""
