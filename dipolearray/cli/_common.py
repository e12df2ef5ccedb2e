"""Arguments and helpers shared by the subcommands."""

from __future__ import annotations


def add_set_argument(p):
    """``--set KEY=VALUE`` (repeatable): override a dotted config key."""
    p.add_argument(
        "--set",
        action="append",
        default=[],
        metavar="KEY=VALUE",
        help="override a config key, e.g. --set arrangement.n_bodies=500 --set 'field.strength=\"2 kV/mm\"' "
        "(value read as TOML, else as text; repeatable)",
    )


def load(args):
    """The checked config of ``args.config`` with the ``--set`` overrides."""
    from ..config import load_config, parse_assignment

    overrides = dict(parse_assignment(s) for s in getattr(args, "set", []) or [])
    return load_config(args.config, overrides=overrides or None)
