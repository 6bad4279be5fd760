"""The ``fluxfront`` command: one entry point, one subcommand per job.

Exit codes: 0 done; 1 the system refused a read or write (full disk, permissions); 2 bad input (one
line on stderr naming the field and the expected form); 3 a search found no feasible design (the
run folder is still written); 130 interrupted (resume continues exactly).
"""
from __future__ import annotations

import argparse
import os
import sys

from fluxfront import __version__
from fluxfront.catalog import CatalogError
from fluxfront.errors import InputError

from . import commands
from . import parser as arguments

EXIT_BAD_INPUT = 2
EXIT_NO_FEASIBLE = commands.EXIT_NO_FEASIBLE
EXIT_INTERRUPTED = commands.EXIT_INTERRUPTED
EXIT_OS_ERROR = 1        # the system refused a read or write (files already written stay intact)


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="fluxfront",
        description="Design the boost inductor of an active PFC front end: search material, core, turns, "
                    "gap, wire and switching frequency together for the volume-loss-cost Pareto front.")
    parser.add_argument("--version", action="version", version=f"fluxfront {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    arguments.register(sub)
    return parser


def main(argv=None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:          # plain `fluxfront`: what it can do
        parser.print_help()
        return 0
    try:
        return args.func(args)
    except (CatalogError, InputError) as exc:
        print(f"fluxfront: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except OSError as exc:             # a full disk, a folder where a file was named, no permission
        name = f" {exc.filename}" if getattr(exc, "filename", None) else ""
        print(f"fluxfront: error: cannot read or write{name}: {exc.strerror or exc}", file=sys.stderr)
        return EXIT_OS_ERROR
    except KeyboardInterrupt:
        print("fluxfront: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    except BrokenPipeError:  # output piped into a reader that stopped early (e.g. head): not an error
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())


__all__ = ["main", "build_parser", "EXIT_BAD_INPUT", "EXIT_NO_FEASIBLE"]
