"""`nav shell [--log FILE]`: the interactive shell on a passage log (also `nav` alone)."""

from __future__ import annotations


def register(sub) -> None:
    p = sub.add_parser(
        "shell", help="interactive shell on a passage log (the default command)",
        description="Open the shell on a passage log: settings, DR, sights with their worked "
                    "reductions, fixes, plots and exports, every entry logged as it is made. "
                    "Without --log it asks for a passage name (logs live in sight_logs/ under the "
                    "current directory); when standard input is not a terminal it reads the same "
                    "commands line by line, and without --log creates "
                    "sight_logs/passage-<UTC date>.jsonl.")
    p.add_argument("--log", metavar="FILE", help="passage log to open, or to create if it does "
                                                 "not exist")
    p.add_argument("--vessel", metavar="NAME", help="vessel name for a new log")
    p.set_defaults(func=run)


def run(args) -> int:
    from ..shell import run_shell

    return run_shell(args.log, vessel=args.vessel)
