"""Command line: ``dipolearray <command> ...``.

Commands are a table of lazily imported modules, each with ``add_arguments(parser)``
and ``run(args) -> int``; their docstrings are the help text. :func:`main` takes
``argv`` so tests call it in-process.

Exit codes: 0 success, 2 bad input or config, 3 solve did not converge, 4 unreadable
result file, 1 unexpected error (``--traceback`` shows it).
"""

from ._main import EXIT_BAD_INPUT, EXIT_NOT_CONVERGED, EXIT_OK, EXIT_SCHEMA, main

__all__ = ["main", "EXIT_OK", "EXIT_BAD_INPUT", "EXIT_NOT_CONVERGED", "EXIT_SCHEMA"]
