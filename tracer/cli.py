"""The ``tracer`` command line: thin over the library.

Each subcommand lives in its own module under :mod:`tracer.commands` and provides
``NAME``, ``HELP``, ``add_arguments(parser)`` and ``run(args) -> int``. This module
only parses, dispatches and turns user errors into exit code 2.

Exit codes: 0 success, 1 a requirement failed, 2 input error.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from . import __version__
from .errors import TracerError

__all__ = ["main", "build_parser", "COMMAND_MODULES"]

#: Subcommand modules, in the order ``--help`` lists them.
COMMAND_MODULES = (
    "tracer.commands.coefficients",
    "tracer.commands.check",
    "tracer.commands.run",
    "tracer.commands.path",
    "tracer.commands.ghosts",
    "tracer.commands.draw",
    "tracer.commands.report",
    "tracer.commands.sweep",
    "tracer.commands.tolerance",
    "tracer.commands.diff",
)

EXIT_OK, EXIT_REQUIREMENT_FAILED, EXIT_INPUT_ERROR = 0, 1, 2


def _available_commands():
    for name in COMMAND_MODULES:
        try:
            yield importlib.import_module(name)
        except ModuleNotFoundError as exc:  # a command whose module is not written yet
            if exc.name != name:
                raise


class _Parser(argparse.ArgumentParser):
    """An option mistake is one line (what is wrong) and where to read more, exit 2."""

    def error(self, message):
        self.exit(EXIT_INPUT_ERROR, f"{self.prog}: error: {message}\n"
                                    f"(see '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="tracer",
        description="Polarisation-aware ray tracing of prism assemblies: where every milliwatt goes.",
        epilog="Exit codes: 0 success, 1 a requirement failed, 2 input error.",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"tracer {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for module in _available_commands():
        p = sub.add_parser(
            module.NAME,
            help=module.HELP,
            description=getattr(module, "DESCRIPTION", module.HELP),
            epilog=getattr(module, "EXAMPLES", None),
            formatter_class=argparse.RawDescriptionHelpFormatter,
        )
        module.add_arguments(p)
        p.set_defaults(_run=module.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "_run", None):
        parser.print_help()
        return EXIT_INPUT_ERROR
    try:
        return int(args._run(args) or 0)
    except TracerError as exc:
        print(f"tracer: error: {exc}", file=sys.stderr)
        return EXIT_INPUT_ERROR
    except BrokenPipeError:  # e.g. piped into head
        return EXIT_OK


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
