"""The ``seaprofile`` command: one program, one subcommand per module in this package.

Each command module defines ``NAME``, ``HELP``, ``add_arguments(parser)`` and ``run(args)``
(returning an exit status). The CLI only parses arguments, calls the public API and prints
tables or JSON; errors are printed as one line on stderr with exit status 2.
"""

from __future__ import annotations

import argparse
import importlib
import sys
import warnings

from .._cf import CAUTION
from .._validate import SeaprofileError
from .._version import __version__
from ..io.errors import ArgumentError

# Command modules, in the order --help lists them. Add a new command here.
COMMANDS = [
    "demo",
    "build",
    "inspect",
    "plot",
    "speed",
    "fan",
    "paths",
    "loss",
    "coverage",
    "soundings",
    "error",
    "stale",
    "grid",
]

EPILOG = (
    "A value that starts with a minus sign may also be written --option=VALUE "
    f"(--latitude=-33.5).\n\nCaution: {CAUTION}"
)


class _Parser(argparse.ArgumentParser):
    """argparse, with usage errors printed as one line (exit status 2)."""

    def error(self, message):
        self.exit(2, f"{self.prog}: error: {message} (see {self.prog} --help)\n")


def build_parser():
    parser = _Parser(
        prog="seaprofile",
        description="Sound-speed profiles from casts, and acoustic ray tracing through them.",
        epilog=EPILOG,
    )
    parser.add_argument("--version", action="version", version=f"seaprofile {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMANDS:
        module = importlib.import_module(f"{__name__}.{name}")
        p = sub.add_parser(
            module.NAME,
            help=module.HELP,
            description=module.__doc__,
            epilog=getattr(module, "EXAMPLE", "") + "\n\n" + EPILOG,
            formatter_class=argparse.RawDescriptionHelpFormatter,
        )
        module.add_arguments(p)
        p.set_defaults(_run=module.run)
    return parser


def main(argv=None):
    """Entry point of the ``seaprofile`` console script."""
    from ._options import join_negative_values

    parser = build_parser()
    argv = list(sys.argv[1:] if argv is None else argv)
    # a usage error: one line, SystemExit(2)
    args = parser.parse_args(join_negative_values(argv))
    if not getattr(args, "_run", None):
        parser.print_help()
        return 2
    from .. import _progress

    # one line on stderr before the first compiled kernel runs on a cold cache
    _progress.compile_notice(quiet=getattr(args, "quiet", False))
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("default")
            warnings.showwarning = _show_warning
            return int(args._run(args) or 0)
    except ArgumentError as exc:  # named by its Python keyword: show the option
        from ._options import option_name

        print(
            f"seaprofile {args.command}: error: {exc.named(option_name(exc.argument))}",
            file=sys.stderr,
        )
        return 2
    except (SeaprofileError, OSError) as exc:
        from ._options import in_option_terms

        print(f"seaprofile {args.command}: error: {in_option_terms(exc)}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130


def _show_warning(message, category, filename, lineno, file=None, line=None):
    print(f"seaprofile: warning: {message}", file=sys.stderr)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
