"""``tracer diff OLD NEW``: what changed between two versions of a scene, and in its results.

OLD and NEW are scene files or git revisions of one, ``REV:path`` (read with ``git show``;
the working tree is not touched; ``path`` is relative to the repository root, or to the
working folder when written ``./path``). Includes are followed on both sides.

Prints the scene difference by meaning (key paths added, removed and changed, values
with their units; order, layout, comments and equal quantities in other units are no
difference), then traces both with the same settings and prints the result difference:
budget and account deltas, ghost paths matched by signature (new, gone, power ratio
new/old) and the requirement verdicts that changed. ``--json`` and ``--html`` write the
same as JSON and as a self-contained HTML page with both ray diagrams overlaid.

Exit code 1 when a requirement verdict got worse (pass < inconclusive < fail, or a new
requirement that does not pass), so a pull request can be gated on it; 2 for an input
error; else 0.
"""

from __future__ import annotations

import json

from . import _common as c

NAME = "diff"
HELP = "compare two versions of a scene (files or REV:path): scene keys and results"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer diff HEAD~1:scenes/plate_ghost.toml scenes/plate_ghost.toml
  tracer diff main:scenes/tir_prism_pair.toml scenes/tir_prism_pair.toml --rays 50 --html diff.html
  tracer diff scenes/plate_ghost.toml scenes/penta_prism_laser.toml --scene-only
  tracer diff v1.0:scenes/penta_prism_laser.toml HEAD:scenes/penta_prism_laser.toml --json diff.json

exit codes: 0 no verdict got worse, 1 a requirement verdict got worse, 2 input error
"""


def add_arguments(parser) -> None:
    parser.add_argument("old", metavar="OLD", help="scene file or REV:path")
    parser.add_argument("new", metavar="NEW", help="scene file or REV:path")
    c.add_trace_options(parser)
    parser.add_argument("--scene-only", action="store_true",
                        help="compare the scene documents only (no trace)")
    parser.add_argument("--json", metavar="PATH", help="write the diff as JSON")
    parser.add_argument("--html", metavar="PATH", help="write the diff as an HTML page with the "
                                                       "overlaid ray diagrams")
    parser.add_argument("--quiet", "-q", action="store_true",
                        help="print only the verdicts that got worse")


def run(args) -> int:
    from ..versions.compare import diff

    c.output_file(args.json, "--json", example="diff.json")
    c.output_file(args.html, "--html", example="diff.html")
    settings = c.trace_settings(args)
    d = diff(args.old, args.new, trace=not args.scene_only, **settings)
    if not args.quiet:
        print(d.format_text())
    elif d.worse:
        for v in d.results.verdicts:
            if v.worse:
                print(f"{v.name}: {v.old or '(absent)'} -> {v.new}: worse")
    if args.json:
        c.write_text(args.json, json.dumps(d.to_dict(), indent=2, allow_nan=False) + "\n")
    if args.html:
        c.write_text(args.html, d.html(figure=not args.scene_only and c.plot_module() is not None))
    if not args.quiet:
        written = [p for p in (args.json, args.html) if p]
        if written:
            print()
            print("wrote " + ", ".join(written))
        if not args.scene_only:
            print()
            print(c.CAUTION_LINE)
    return 1 if d.worse else 0
