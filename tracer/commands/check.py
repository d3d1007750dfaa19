"""``tracer check``: validate scene files and print what they contain.

Each scene is loaded with the strict loader; every problem of every file is printed
(file, TOML key path, what was expected), and the exit code is 2 when any file has a
problem. For valid scenes it prints the solids with the treatment of every face, the
gaps (thickness in µm, medium, and how each was found: declared, mated or automatic),
the sources, detectors, requirements and notes, each face with its outward normal and
area centroid, and warnings (an inline material relative to air in a vacuum ambient).
``--json`` prints the same as JSON.
"""

from __future__ import annotations

import json
import sys

NAME = "check"
HELP = "validate scene files and summarise solids, faces, gaps, sources, detectors, requirements"
DESCRIPTION = __doc__.replace("``", "")
EXAMPLES = """examples:
  tracer check scenes/tir_prism_pair.toml
  tracer check scenes/*.toml
  tracer check --json scenes/cube_beamsplitter_camera.toml > cube.json

exit codes: 0 every scene valid, 2 a scene has a problem (all of them are printed)
"""


def add_arguments(parser) -> None:
    parser.add_argument("scenes", nargs="+", metavar="SCENE", help="scene files (.toml)")
    parser.add_argument("--json", action="store_true",
                        help="print a JSON object {\"scenes\": [...], \"problems\": [...]} instead of text")
    parser.add_argument("--quiet", "-q", action="store_true",
                        help="print only problems (and nothing for valid scenes)")


def run(args) -> int:
    from ..scene import SceneError, format_summary, load, summarize
    from ..scene.problems import Problem
    from ._common import scene_file_problem

    summaries, problems = [], []
    for path in args.scenes:
        bad = scene_file_problem(path)
        if bad:
            problems.append(Problem(file=path, key="", message=bad.split(": ", 1)[1]))
            continue
        try:
            scene = load(path)
        except SceneError as exc:
            problems.extend(exc.problems)
            continue
        summaries.append(summarize(scene))
    if args.json:
        out = {
            "valid": not problems,
            "scenes": summaries,
            "problems": [{"file": p.file, "key": p.key, "message": p.message, "line": p.line,
                          "column": p.column, "text": str(p)} for p in problems],
        }
        json.dump(out, sys.stdout, indent=2, ensure_ascii=False)
        sys.stdout.write("\n")
    else:
        if not args.quiet:
            for i, s in enumerate(summaries):
                if i:
                    print()
                print(format_summary(s))
        else:  # warnings are not problems, but --quiet still shows them
            for s in summaries:
                for w in s.get("warnings", ()):
                    print(f"warning: {w}", file=sys.stderr)
        if problems:
            count = len(problems)
            print(f"{count} problem{'s' if count != 1 else ''}:", file=sys.stderr)
            for p in problems:
                print(f"  {p}", file=sys.stderr)
        elif not args.quiet:
            n = len(summaries)
            print(f"\n{n} scene{'s' if n != 1 else ''} valid.")
    return 2 if problems else 0
