"""The ``tracer`` command line: thin over the library.

Each subcommand lives in its own module under :mod:`tracer.commands` and provides
``NAME``, ``HELP``, ``add_arguments(parser)`` and ``run(args) -> int``. This module
only parses, dispatches and turns user errors into exit code 2.

Exit codes: 0 success, 1 a requirement failed or is inconclusive, 2 input error,
130 interrupted (Ctrl-C: one line on stderr, no traceback; files are written
atomically, so none is left half-written).
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
#: Interrupted by the user (SIGINT): 128 + 2, the shell convention.
EXIT_INTERRUPTED = 130


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
        epilog="Exit codes: 0 success, 1 a requirement failed or is inconclusive, 2 input error, 130 interrupted.",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"tracer {__version__}")
    parser.add_argument("--allow-outside-files", action="store_true",
                        help="let scenes read mesh files outside their own folder tree")
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
    try:
        return _main(argv)
    except KeyboardInterrupt:  # Ctrl-C anywhere: parsing, loading, tracing, writing
        _interrupted()
        return EXIT_INTERRUPTED


def _main(argv):
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "_run", None):
        parser.print_help()
        return EXIT_INPUT_ERROR
    if getattr(args, "allow_outside_files", False):
        import os
        from .scene.loader import ALLOW_OUTSIDE_ENV
        os.environ[ALLOW_OUTSIDE_ENV] = "1"  # the loader, and sweep workers, read it
    try:
        return int(args._run(args) or 0)
    except TracerError as exc:
        print(f"tracer: error: {exc}", file=sys.stderr)
        return EXIT_INPUT_ERROR
    except BrokenPipeError:  # e.g. piped into head
        return EXIT_OK


def _interrupted() -> None:
    """One line on stderr after Ctrl-C (ending a progress bar's line first)."""
    try:
        lead = "\n" if sys.stderr.isatty() else ""  # end a progress bar's line
        sys.stderr.write(f"{lead}tracer: interrupted; files already written are complete, "
                         "the rest were not written\n")
        sys.stderr.flush()
    except (OSError, ValueError):
        pass


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
