"""The ``plasmazero`` command line.

Each sub-command lives in its own module ``plasmazero.interfaces.cmd_<name>`` with two
functions: ``add_arguments(parser)`` and ``run(args) -> int``. Modules are imported only
when their command runs, so ``plasmazero --help`` stays fast.

Errors in the user's input (:class:`plasmazero.data.errors.InputError`) are printed as
one line per problem on stderr, with exit status 2, never as a traceback. Set
``PLASMAZERO_DEBUG=1`` to see the traceback of an unexpected failure.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys

from plasmazero import __version__
from plasmazero.data.errors import InputError

#: command name -> one-line help; the module is ``cmd_<name>``.
COMMANDS = {
    "swarm": "electron swarm parameters and rate coefficients versus E/N",
    "check": "validate a mechanism file and summarise it",
    "run": "run a discharge scenario and write its result file",
    "demo": "run the shipped (invented) packed-bed CO2/H2 demo",
    "examples": "list the shipped example scenarios",
    "init": "write a shipped example scenario into a folder to edit",
    "report": "print summary, bed feed and pathways of a result file",
    "export": "export the bed feed of a result (CSV, YAML, JSON)",
    "plot": "plot a result file into PNG figures",
    "scan": "scan a scenario over parameters (grid or Latin hypercube; local or Dask)",
    "sensitivity": "sensitivities of a scenario's figures to every rate coefficient",
    "uncertainty": "Monte Carlo propagation of rate-coefficient uncertainty",
}


class _Parser(argparse.ArgumentParser):
    """ArgumentParser whose errors are one line, like every other error of the CLI."""

    def error(self, message):
        self.exit(2, f"plasmazero: error: {message}\n")


def build_parser():
    """The full argument parser (imports every command module)."""
    parser = _Parser(prog="plasmazero", description="Zero-dimensional plasma chemistry.")
    parser.add_argument("--version", action="version", version=f"plasmazero {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name, help_text in COMMANDS.items():
        module = importlib.import_module(f"plasmazero.interfaces.cmd_{name}")
        p = sub.add_parser(name, help=help_text, description=module.__doc__.splitlines()[0])
        module.add_arguments(p)
    return parser


def main(argv=None):
    """Entry point of the console script; returns the process exit status."""
    argv = sys.argv[1:] if argv is None else list(argv)
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return 0
    module = importlib.import_module(f"plasmazero.interfaces.cmd_{args.command}")
    try:
        return int(module.run(args) or 0)
    except InputError as exc:
        for problem in exc.problems:
            print(f"plasmazero: error: {problem}", file=sys.stderr)
        return 2
    except BrokenPipeError:   # output piped into head and the like: stop quietly
        sys.stderr.close()
        return 0
    except KeyboardInterrupt:
        print("plasmazero: interrupted", file=sys.stderr)
        return 130
    except Exception as exc:  # noqa: BLE001 - the CLI never shows a traceback by default
        if os.environ.get("PLASMAZERO_DEBUG"):
            raise
        print(f"plasmazero: error: {type(exc).__name__}: {exc} "
              "(set PLASMAZERO_DEBUG=1 for the traceback)", file=sys.stderr)
        return 1


if __name__ == "__main__":
    sys.exit(main())
