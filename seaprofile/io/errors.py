"""Errors that name one argument by attribute, so that callers never parse message text."""

from __future__ import annotations

from .._validate import SeaprofileError

__all__ = ["ArgumentError", "MemoryLimitError"]


class ArgumentError(SeaprofileError):
    """A bad value of one argument.

    Parameters
    ----------
    argument : str
        The argument's name as the caller knows it (a Python keyword such as
        ``"bin_size"``; the command line maps it to its option, ``--bin``).
    reason : str
        What is wrong, without the argument's name.

    Attributes
    ----------
    argument, reason : str
        As given; ``str(error)`` is ``"argument: reason"``.
    """

    def __init__(self, argument, reason):
        self.argument = str(argument)
        self.reason = str(reason)
        super().__init__(f"{self.argument}: {self.reason}")

    def __reduce__(self):  # picklable (results travel between dask processes)
        return type(self), (self.argument, self.reason)

    def named(self, name):
        """The message with the argument called ``name`` (e.g. its command-line option)."""
        return f"{name}: {self.reason}"


class MemoryLimitError(ArgumentError):
    """The work asked for would need more memory than allowed.

    Attributes
    ----------
    requested : int
        Estimated bytes.
    limit : int
        Allowed bytes (:data:`seaprofile.io.MEMORY_LIMIT` by default).
    """

    def __init__(self, argument, reason, requested, limit):
        self.requested = int(requested)
        self.limit = int(limit)
        super().__init__(argument, reason)

    def __reduce__(self):
        return type(self), (self.argument, self.reason, self.requested, self.limit)
