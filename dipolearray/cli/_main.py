from __future__ import annotations

import argparse
import importlib
import sys

EXIT_OK = 0
EXIT_UNEXPECTED = 1
EXIT_BAD_INPUT = 2
EXIT_NOT_CONVERGED = 3
EXIT_SCHEMA = 4

COMMANDS = {
    "solve": "dipolearray.cli._solve",
    "check": "dipolearray.cli._check",
    "arrange": "dipolearray.cli._arrange",
    "sweep": "dipolearray.cli._sweep",
    "spectrum": "dipolearray.cli._spectrum",
    "inspect": "dipolearray.cli._inspect",
    "figures": "dipolearray.cli._figures",
    "report": "dipolearray.cli._report",
}


def _parser():
    from .._version import __version__

    p = argparse.ArgumentParser(
        prog="dipolearray",
        description="Coupled-dipole engine for particle-filled dielectrics.",
        epilog="Example: dipolearray solve configs/capacitor_film.toml --overwrite && "
        "dipolearray report runs/capacitor-film.h5",
    )
    p.add_argument("--version", action="version", version=f"dipolearray {__version__}")
    p.add_argument("--traceback", action="store_true", help="show the full traceback on errors")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    for name, modname in COMMANDS.items():
        mod = importlib.import_module(modname)
        doc = (mod.__doc__ or "").strip()
        first = doc.splitlines()[0] if doc else name
        sp = sub.add_parser(
            name,
            help=first,
            description=doc,
            formatter_class=argparse.RawDescriptionHelpFormatter,
        )
        sp.add_argument("--traceback", action="store_true", help="show the full traceback on errors")
        mod.add_arguments(sp)
        sp.set_defaults(_module=mod)
    return p


def main(argv=None) -> int:
    """Run the command line with ``argv`` (default ``sys.argv[1:]``); return the exit code."""
    from ..errors import ConvergenceError, InputError, SchemaError

    parser = _parser()
    args = parser.parse_args(argv)
    if not getattr(args, "command", None):
        parser.print_help()
        return EXIT_BAD_INPUT
    import warnings

    def _one_line(message, category, filename, lineno, file=None, line=None):
        print(f"warning: {message}", file=sys.stderr)

    try:
        with warnings.catch_warnings():
            warnings.showwarning = _one_line
            return int(args._module.run(args))
    except InputError as exc:
        code, msg = EXIT_BAD_INPUT, f"error: {exc}"
    except ConvergenceError as exc:
        code, msg = EXIT_NOT_CONVERGED, f"error: {exc}"
    except SchemaError as exc:
        code, msg = EXIT_SCHEMA, f"error: {exc}"
    except KeyboardInterrupt:
        code, msg = 130, "interrupted"
    except Exception as exc:  # noqa: BLE001 - the CLI turns every failure into one line
        code, msg = EXIT_UNEXPECTED, f"unexpected error: {type(exc).__name__}: {exc}"
    if args.traceback:
        import traceback

        traceback.print_exc()
    print(msg, file=sys.stderr)
    return code


def entry() -> None:
    """Console-script entry point."""
    sys.exit(main())
