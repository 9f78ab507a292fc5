"""The `drawerfit` command: argument parsing and dispatch to the subcommands.

Each family of subcommands lives in its own module with a `register(sub)`
function; this file only wires them.  Exit codes: 0 success, 2 bad input,
3 no design meets the specification.
"""

from __future__ import annotations

import argparse
import sys

from . import cmd_analyze, cmd_design, cmd_drawer, cmd_sheet


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="drawerfit",
        description="Design a transistor gain stage from the parts in your drawers.",
    )
    parser.add_argument(
        "--inventory", metavar="FILE",
        help="drawer file (CSV); default: $DRAWERFIT_INVENTORY, ./drawer.csv, or your data folder",
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    cmd_drawer.register(sub)
    cmd_analyze.register(sub)
    cmd_design.register(sub)
    cmd_sheet.register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        from .app import run_app  # Textual is imported only for the app itself

        return run_app(args.inventory)
    return int(args.handler(args) or 0)


if __name__ == "__main__":
    sys.exit(main())
