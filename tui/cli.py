"""The `drawerfit` command: argument parsing and dispatch to the subcommands.

Each family of subcommands lives in its own module with a `register(sub)`
function; this file only wires them and holds the rules every command follows:

* exit codes: 0 done, 1 a change refused by the state of the drawer, 2 bad input
  (options, files), 3 proven that no design meets the spec, 4 no design found within
  the time limit (not proven impossible), 130 interrupted (Ctrl-C), 141 the reader of
  our output went away (`| head`);
* no traceback reaches the user: anything unforeseen is one line naming the command
  (exit 70); `DRAWERFIT_DEBUG=1` shows the traceback instead.
"""

from __future__ import annotations

import argparse
import os
import sys
import time

import importlib

# Which module registers each subcommand: only the family asked for is imported, so `drawerfit list`
# never loads the physics (scipy) and `design --help` never loads the solver.  tests check the table.
FAMILIES = {
    "check": "cmd_drawer", "list": "cmd_drawer", "add": "cmd_drawer", "edit": "cmd_drawer",
    "count": "cmd_drawer", "remove": "cmd_drawer", "history": "cmd_drawer", "undo": "cmd_drawer",
    "analyze": "cmd_analyze", "design": "cmd_design", "build": "cmd_design", "sheet": "cmd_sheet",
    "open": "cmd_open",
}

EXIT_INTERRUPTED = 130      # 128 + SIGINT, as a shell reports a Ctrl-C
EXIT_PIPE_CLOSED = 141      # 128 + SIGPIPE, as a shell reports a writer whose reader left
EXIT_INTERNAL = 70          # EX_SOFTWARE (sysexits.h): a fault of ours, never of the input


class _Parser(argparse.ArgumentParser):
    """argparse with one-line errors (`drawerfit: --depth: …`) and exit 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        if message.startswith("unrecognized arguments:") and any(
                w == "--inventory" or w.startswith("--inventory=") for w in message.split()):
            # `drawerfit list --inventory F`: the drawer is named before the command, for every command
            message += " (--inventory goes before the command: drawerfit --inventory FILE COMMAND …)"
        self.exit(2, f"{self.prog}: {message} (see {self.prog} --help)\n")


def build_parser(command: str | None = None) -> argparse.ArgumentParser:
    """The parser; with `command` only that subcommand's family is registered (all when None or unknown)."""
    parser = _Parser(
        prog="drawerfit",
        description="Design a transistor gain stage from the parts in your drawers.",
    )
    parser.add_argument(
        "--inventory", metavar="FILE",
        help="drawer file (CSV); default: $DRAWERFIT_INVENTORY, ./drawer.csv, or your data folder",
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    families = [FAMILIES[command]] if command in FAMILIES else list(dict.fromkeys(FAMILIES.values()))
    for family in families:
        importlib.import_module(f"{__package__}.{family}").register(sub)
    return parser


def _command_of(argv: list[str]) -> str | None:
    """The subcommand named in argv (the first word that is neither an option nor --inventory's value)."""
    skip = False
    for a in argv:
        if skip:
            skip = False
        elif a == "--inventory":
            skip = True
        elif not a.startswith("-"):
            return a
    return None


STARTED = time.perf_counter()  # when the running command began: its time limit counts from here (cmd_design)


def main(argv: list[str] | None = None) -> int:
    global STARTED
    STARTED = time.perf_counter()
    try:
        code = _run(argv)
        sys.stdout.flush()  # a closed pipe shows here, not in the interpreter's exit
        return code
    except BrokenPipeError:
        _silence_stdout()
        return EXIT_PIPE_CLOSED
    except KeyboardInterrupt:
        print("\ndrawerfit: interrupted; no change was left half-made", file=sys.stderr)
        return EXIT_INTERRUPTED
    except SystemExit as exc:  # argparse's --help and usage errors
        return exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 2)
    except Exception as exc:  # noqa: BLE001 - the one place no exception may pass
        if os.environ.get("DRAWERFIT_DEBUG"):
            raise
        name = _COMMAND[0]
        print(f"drawerfit{' ' + name if name else ''}: internal error ({type(exc).__name__}: "
              f"{str(exc)[:200]}); nothing was changed by it. Please report it with the command line "
              "(DRAWERFIT_DEBUG=1 shows the details).", file=sys.stderr)
        return EXIT_INTERNAL


# Options whose value may start with "-" (a range below 0 °C): argparse would take "-10..50" for an option.
_SIGNED_VALUES = ("--temp-range",)


def _join_signed(argv: list[str]) -> list[str]:
    out: list[str] = []
    it = iter(argv)
    for a in it:
        if a in _SIGNED_VALUES:
            nxt = next(it, None)
            out.append(a if nxt is None else f"{a}={nxt}")
        else:
            out.append(a)
    return out


_COMMAND = [""]  # the subcommand being run, for the one-line internal-error message


def _run(argv: list[str] | None) -> int:
    argv = _join_signed(list(sys.argv[1:] if argv is None else argv))
    parser = build_parser(_command_of(argv))
    args = parser.parse_args(argv)
    _COMMAND[0] = args.command or ""
    if args.command is None:
        from .app import run_app  # Textual is imported only for the app itself

        return run_app(args.inventory)
    return int(args.handler(args) or 0)


def _silence_stdout() -> None:
    """Point stdout at /dev/null so the interpreter's final flush does not raise again."""
    if sys.stdout is not sys.__stdout__:  # replaced (tests capturing output): leave the real fd alone
        return
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError, AttributeError):  # stdout replaced (tests) or already closed
        pass


if __name__ == "__main__":
    sys.exit(main())
