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
import contextlib
import os
import re
import sys
import time
import warnings

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


# A value that starts with "-" and a digit or a point (-1k, -1%, -.5, -10..50, also -inf): argparse reads
# "-1k" as an option and says "expected one argument"; joined to its option as --source=-1k it reaches our
# own checks, which name the option and the reason.  (Plain negative numbers such as -12 argparse takes.)
_NEGATIVE_LOOKING = re.compile(r"-([0-9.]|inf|nan)", re.IGNORECASE)


class _Parser(argparse.ArgumentParser):
    """argparse with one-line errors (`drawerfit: --depth: …`) and exit 2."""

    def parse_known_args(self, args=None, namespace=None):  # type: ignore[override]
        # Each subcommand's parser is handed its own words, so this sees only options it defines.
        if args is not None:
            args = self._join_negative_values(list(args))
        return super().parse_known_args(args, namespace)

    def _join_negative_values(self, args: list[str]) -> list[str]:
        valued = {s for a in self._actions if a.option_strings and a.nargs is None for s in a.option_strings}
        out: list[str] = []
        i = 0
        while i < len(args):
            a = args[i]
            if a == "--":  # the rest are positionals, as argparse takes them
                out += args[i:]
                break
            if a in valued and i + 1 < len(args) and _NEGATIVE_LOOKING.match(args[i + 1]):
                out.append(f"{a}={args[i + 1]}")
                i += 2
                continue
            out.append(a)
            i += 1
        return out

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


_COMMAND = [""]  # the subcommand being run, for the one-line internal-error message


def _run(argv: list[str] | None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser(_command_of(argv))
    args = parser.parse_args(argv)
    _COMMAND[0] = args.command or ""
    if args.command is None:
        from .app import run_app  # Textual is imported only for the app itself

        return run_app(args.inventory)
    with _plain_warnings():
        return int(args.handler(args) or 0)


@contextlib.contextmanager
def _plain_warnings():
    """A warning raised while a command runs (numpy's RuntimeWarning from deep in a calculation) is said
    once as one plain line, never as Python's file:line and source echo.  The warning filters are left as
    they are (tests that turn warnings into errors still see them), only how a shown one reads changes."""
    said: set[str] = set()

    def show(message, category, filename, lineno, file=None, line=None) -> None:
        text = str(message)
        if text in said:
            return
        said.add(text)
        name = _COMMAND[0]
        print(f"drawerfit{' ' + name if name else ''}: note: a calculation went out of range ({text[:120]}); "
              "please report it with the command line (DRAWERFIT_DEBUG=1 shows where)", file=sys.stderr)

    if os.environ.get("DRAWERFIT_DEBUG"):
        yield
        return
    with warnings.catch_warnings():
        warnings.showwarning = show
        yield


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
