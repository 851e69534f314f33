"""The project's own exceptions.

Every failure a user can cause is an :class:`InputError` (exit code 2 at the
CLI); a search stopped by a user-set limit is a :class:`LimitReached`.
"""

from __future__ import annotations

__all__ = ["ElucidateError", "InputError", "LimitReached"]


class ElucidateError(Exception):
    """Base class of every error raised on purpose by elucidate."""


class InputError(ElucidateError, ValueError):
    """Bad user input: the message names the offending token and where it is.

    Parameters
    ----------
    message : str
        One line, in the user's terms, e.g. ``"formula 'C9H10O2.5': '.5' at
        position 7 is not an element count"``.
    """

    def __init__(self, message: str) -> None:
        super().__init__(" ".join(message.split()))


class LimitReached(ElucidateError):
    """A time or size limit set by the user stopped a search early."""
