"""`drawerfit sheet`: a saved design's build sheet as a file to print or keep.

    drawerfit [--inventory F] sheet SAVED [--pick N] --format html|svg|md|csv|cir [-o FILE]

html: the whole sheet, one self-contained file for A4 or Letter (1–2 pages); svg: the
schematic alone; md: the sheet as Markdown; csv: the pick list; cir: the design's SPICE
netlist with a source, a load and analyses, runnable with `ngspice -b`.  A two-stage chain's
files cover both stages (html up to 3 pages).  Without -o the output goes to stdout.  Exit codes: 0 written, 2 bad input (file, --pick, -o).
"""

from __future__ import annotations

import sys
from pathlib import Path

from inventory.atomic import atomic_write

FORMATS = ("html", "svg", "md", "csv", "cir")


def register(sub) -> None:
    p = sub.add_parser("sheet", help="write a saved design's build sheet (html, svg, md, csv, cir)",
                       description="Write the build sheet of a design saved with `design --save`: html (print it), "
                                   "svg (the schematic), md, csv (the pick list) or cir (a SPICE bench).")
    p.add_argument("file", metavar="SAVED", help="a file written by `drawerfit design --save`")
    p.add_argument("--pick", default="1", help="which design of the file (1 = the best)")
    p.add_argument("--format", required=True, choices=FORMATS, help="what to write")
    p.add_argument("-o", "--output", metavar="FILE", help="write here (atomically) instead of to stdout")
    p.set_defaults(handler=run_sheet)


def render(doc: dict, pick: int, fmt: str, source: str) -> str:
    """The text of one format (the app calls this too); text-direction controls shown (export/visible.py)."""
    from .export import bench_cir, content, html_sheet, md_sheet, pick_csv, schematic_svg
    from .export.visible import visible

    sheet = content.build_sheet(doc, pick, source)  # one stage or a two-stage chain: every format covers both
    writer = {"html": html_sheet.render, "svg": schematic_svg.schematic_svg, "md": md_sheet.render,
              "csv": pick_csv.render, "cir": bench_cir.render}[fmt]
    return visible(writer(sheet))


def run_sheet(args) -> int:
    from .export.content import SheetInputError, load

    try:
        doc, pick = load(args.file, args.pick)
        text = render(doc, pick, args.format, Path(args.file).name)
    except SheetInputError as exc:
        print(f"drawerfit: {exc}", file=sys.stderr)
        return 2
    except (KeyError, TypeError, ValueError, IndexError, AttributeError) as exc:  # a figure the shape check let by
        why = f"missing {exc}" if isinstance(exc, KeyError) else str(exc)
        print(f"drawerfit: {args.file}: design {args.pick} cannot be drawn ({why})", file=sys.stderr)
        return 2
    if not args.output:
        sys.stdout.write(text)
        return 0
    try:
        atomic_write(Path(args.output), text.encode("utf-8"))
    except OSError as exc:
        print(f"drawerfit: -o {args.output}: {exc.strerror or exc}", file=sys.stderr)
        return 2
    print(f"wrote {args.output} ({args.format}, design {pick} of {Path(args.file).name})", file=sys.stderr)
    return 0
