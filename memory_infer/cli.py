"""The ``memory-infer`` command: subcommands dispatch to :mod:`memory_infer.commands`."""
from __future__ import annotations

import argparse
import logging
import sys

from .errors import MemoryInferError

COMMANDS = {
    "waveform": "one binary's strain and memory: table, figure and memory-only SNR",
    "evidence": "Bayes factors for one event (nested sampling, reweighting, fast), with its report",
    "combine": "catalog combination of per-event results, with its report",
    "campaign": "injection-recovery campaign: distributions, forecasts, calibration",
    "rank": "events ranked by memory-only SNR, to choose which to analyse first",
    "demo": "the built-in invented scenario, end to end",
}


def build_parser():
    parser = argparse.ArgumentParser(prog="memory-infer", description="Bayesian tests for the nonlinear "
                                     "gravitational-wave memory")
    sub = parser.add_subparsers(dest="command", required=True)
    for name, text in COMMANDS.items():
        module = _module(name)
        module.add_arguments(sub.add_parser(name, help=text, description=text))
    return parser


def _module(name):
    import importlib

    return importlib.import_module(f".commands.{name}", __package__)


def main(argv=None) -> int:
    from .performance import tune_allocator

    tune_allocator()
    import bilby  # noqa: F401  (its import sets its logger to INFO; quieten it afterwards)

    logging.getLogger("bilby").setLevel(logging.WARNING)
    args = build_parser().parse_args(argv)
    try:
        return _module(args.command).run(args)
    except MemoryInferError as error:
        print(f"memory-infer {args.command}: {error}.", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"memory-infer {args.command}: interrupted; finished outputs are kept.", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())
