"""The `nav` command line: one argparse parser, one module per group of subcommands.

Each module in ``nav.commands`` exposes ``register(subparsers)``, which adds its subcommands and
sets ``func`` on them. Heavy modules (matplotlib, prompt_toolkit) are imported inside the command
that needs them, so ``nav almanac`` starts fast.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from .errors import NavError, printable

# The subcommand modules, in the order their commands appear in --help.
COMMAND_MODULES = (
    "nav.commands.almanac_cmd",
    "nav.commands.sights_cmd",
    "nav.commands.series_cmd",
    "nav.commands.passage_cmd",
    "nav.commands.review_cmd",
    "nav.commands.noon_cmd",
    "nav.commands.sky_cmd",
    "nav.commands.meridian_cmd",
    "nav.commands.compass_cmd",
    "nav.commands.identify_cmd",
    "nav.commands.plan_cmd",
    "nav.commands.equal_cmd",
    "nav.commands.marking_cmd",
    "nav.commands.shell_cmd",
)

EXIT_OK, EXIT_INPUT = 0, 2


class _Parser(argparse.ArgumentParser):
    """argparse that reports a usage error as one line and exit code 2 (its own default)."""

    def error(self, message: str):  # pragma: no cover - exercised through main()
        self.print_usage(sys.stderr)
        self.exit(EXIT_INPUT, f"nav: error: {printable(message)}\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="nav",
        description="Celestial-navigation sight-reduction workbench: a cross-check that backs "
                    "up, and never replaces, approved navigation practice, charts and "
                    "instruments. The skipper stays responsible.",
    )
    from . import __version__

    parser.add_argument("--version", action="version", version=f"nav {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMAND_MODULES:
        importlib.import_module(name).register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        if "nav.commands.shell_cmd" in COMMAND_MODULES:
            args = parser.parse_args(["shell", *argv])
        else:
            parser.print_help()
            return EXIT_OK
    try:
        return int(args.func(args) or EXIT_OK)
    except NavError as err:
        print(f"nav {args.command}: {err}", file=sys.stderr)
        return EXIT_INPUT
    except BrokenPipeError:  # `nav almanac ... | head`
        return EXIT_OK
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
