"""The package's exception classes. Library code raises these; only the CLI prints them."""

from __future__ import annotations


class PoroplaneError(Exception):
    """Base class of every error the package raises on purpose."""


class InputError(PoroplaneError):
    """Bad input: names where it came from, the field, and the fix.

    Parameters
    ----------
    message : what is wrong, in one sentence.
    field : dotted path of the offending field (e.g. ``materials.clay.permeability``).
    source : file the input came from, if any.
    fix : what the user should do instead.
    """

    def __init__(self, message: str, field: str | None = None, source: str | None = None,
                 fix: str | None = None):
        self.message = message
        self.field = field
        self.source = source
        self.fix = fix
        super().__init__(self.__str__())

    def __str__(self) -> str:
        where = ""
        if self.source:
            where += f"{self.source}: "
        if self.field:
            where += f"{self.field}: "
        text = where + self.message
        if self.fix:
            text += ("" if text.rstrip().endswith((".", ":", "?", "!")) else ".") + f" Fix: {self.fix}"
        return text


class TooLargeError(InputError):
    """The problem does not fit the memory of this machine (refused before starting)."""


class MeshError(InputError):
    """A mesh that cannot be used (inverted elements, missing groups, ...)."""


class SolverError(PoroplaneError):
    """The numerical solution failed (singular matrix, no convergence)."""
