"""Error classes of dipolearray.

Every error raised on purpose by the package derives from :class:`DipoleArrayError`
and from the builtin exception it refines, so ``except ValueError`` still works for
callers that do not know this package.

=====================  ==================  ===========================================
class                  also a              raised when
=====================  ==================  ===========================================
``InputError``         ``ValueError``      an array, scalar or key given by the user is
                                           not allowed (``.key`` names it)
``ConfigError``        ``InputError``      a TOML config is invalid (``.key`` is the
                                           dotted path)
``OverlapError``       ``InputError``      bodies overlap (``.pairs`` lists the first
                                           offending index pairs)
``SolveError``         ``RuntimeError``    a solver cannot proceed
``ConvergenceError``   ``SolveError``      ``Solution.check()`` on a solve that did not
                                           converge (``.solution`` carries the record)
``SchemaError``        ``ValueError``      an HDF5 file is not a result this version
                                           can read
=====================  ==================  ===========================================
"""

from __future__ import annotations

__all__ = [
    "DipoleArrayError",
    "InputError",
    "ConfigError",
    "OverlapError",
    "SolveError",
    "ConvergenceError",
    "SchemaError",
]


class DipoleArrayError(Exception):
    """Base class of every error raised on purpose by dipolearray."""


class InputError(DipoleArrayError, ValueError):
    """Invalid user input.

    Parameters
    ----------
    message : str
        What was given and what is allowed.
    key : str, optional
        Name of the offending argument or config key.
    """

    def __init__(self, message: str, key: str | None = None):
        super().__init__(message)
        self.key = key


class ConfigError(InputError):
    """Invalid configuration file; ``key`` is the dotted path of the offending entry."""


class OverlapError(InputError):
    """Bodies overlap.

    Parameters
    ----------
    message : str
        Human-readable description.
    pairs : list of tuple of int
        The first offending index pairs ``(i, j)`` with ``i < j``.
    key : str, optional
        Argument name (normally ``"positions"``).
    """

    def __init__(self, message: str, pairs, key: str | None = "positions"):
        super().__init__(message, key=key)
        self.pairs = [tuple(int(v) for v in p) for p in pairs]


class SolveError(DipoleArrayError, RuntimeError):
    """A solver could not proceed."""


class ConvergenceError(SolveError):
    """A solve did not reach its tolerance; ``solution`` holds the full record."""

    def __init__(self, message: str, solution=None):
        super().__init__(message)
        self.solution = solution


class SchemaError(DipoleArrayError, ValueError):
    """An HDF5 file is not a dipolearray result this version can read."""
