"""Exceptions for problems the user can fix.

Every user mistake in filmoptic is raised as a :class:`FilmopticError` (or a subclass) whose
``str()`` is one line that names the problem and, where it can, the fix. The command-line layer
turns it into that line on stderr and exit code 2; Python callers catch it like any exception.
"""

__all__ = [
    "FilmopticError",
    "StackSyntaxError",
    "UnknownMaterialError",
    "WavelengthRangeError",
    "DataFileError",
    "TargetError",
]


class FilmopticError(ValueError):
    """A problem with the user's input; the message is one line and says how to fix it."""

    def __init__(self, message: str):
        # One line, always: the CLI prints it as is.
        super().__init__(" ".join(str(message).split()))


class StackSyntaxError(FilmopticError):
    """The stack notation could not be read (points at the offending item)."""


class UnknownMaterialError(FilmopticError):
    """A material name is not in the library (the message suggests near matches)."""


class WavelengthRangeError(FilmopticError):
    """A wavelength lies outside a dataset's tabulated range."""


class DataFileError(FilmopticError):
    """A user file (n,k table, measured spectrum, readings, illuminant) cannot be used."""


class TargetError(FilmopticError):
    """A requested target cannot be met (the message gives the closest reachable value)."""
