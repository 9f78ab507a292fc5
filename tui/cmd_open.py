"""`drawerfit open FILE`: the app, opened on the designs of a file saved with `design --save`.

    drawerfit [--inventory F] open FILE

With no --inventory the drawer file named in the saved file is used when it still exists.
Exit codes: 0 the app closed, 2 the file cannot be read as saved designs (one line says why).
"""

from __future__ import annotations


def register(sub) -> None:
    p = sub.add_parser("open", help="open a design file saved with `design --save` in the app",
                       description="Open the app on the designs of a file saved with `drawerfit design --save`.")
    p.add_argument("file", metavar="FILE", help="a file written by `drawerfit design --save`")
    p.set_defaults(handler=run_open)


def run_open(args) -> int:
    from .app import run_app  # Textual is imported only for the app itself

    return run_app(args.inventory, args.file)
