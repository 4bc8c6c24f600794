"""The ``memory-infer`` command: subcommands dispatch to :mod:`memory_infer.commands`."""
from __future__ import annotations

import argparse
import logging
import os
import sys

from .common.errors import MemoryInferError

COMMANDS = {
    "waveform": "one binary's strain and memory: table, figure and memory-only SNR",
    "evidence": "Bayes factors for one event (nested sampling, reweighting, fast), with its report",
    "combine": "catalog combination of per-event results, with its report",
    "catalog": "every event of a catalog from its releases and open-data strain, resumable, with one report",
    "campaign": "injection-recovery campaign: distributions, forecasts, calibration",
    "rank": "events ranked by memory-only SNR, to choose which to analyse first",
    "report": "rebuild a report from its result file alone (evidence.json, catalog.json or campaign.json)",
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


class PlainLines(logging.Handler):
    """Each library message as one printed line (on whatever standard output is current)."""

    def emit(self, record):
        print(self.format(record), flush=True)


def show_library_messages() -> None:
    """Library modules log to the "memory_infer" logger; the command line shows them as plain lines."""
    logger = logging.getLogger("memory_infer")
    if not any(isinstance(h, PlainLines) for h in logger.handlers):
        logger.addHandler(PlainLines())
    logger.setLevel(logging.INFO)
    logger.propagate = False


def main(argv=None) -> int:
    command = "memory-infer"
    try:  # Ctrl-C at any moment, even while the libraries load: one line
        from .common.performance import tune_allocator

        for name in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):  # before numpy loads: one
            os.environ.setdefault(name, "1")  # thread per process (parallel work is processes; see common.executors)
        tune_allocator()
        import bilby  # noqa: F401  (its import sets its logger to INFO; quieten it afterwards)

        logging.getLogger("bilby").setLevel(logging.WARNING)
        show_library_messages()
        args = build_parser().parse_args(argv)
        command = f"memory-infer {args.command}"
        return _run(args)
    except KeyboardInterrupt:
        import signal

        signal.signal(signal.SIGINT, signal.SIG_IGN)  # one interruption is enough: a late second one must not turn
        sys.stdout.flush()  # the exit into a death by signal while the interpreter shuts down
        print(f"{command}: interrupted; finished outputs are kept.", file=sys.stderr)
        _forget_unhandled_interrupt()
        return 130


def _forget_unhandled_interrupt() -> None:
    """CPython remembers a KeyboardInterrupt that ended code it ran through its ``PyRun_*`` functions (as some
    compiled modules do while they import) and then ends the process by SIGINT at exit, whatever the exit status:
    handled here, so the flag is reset by running an empty statement the same way (the exit status stays 130)."""
    try:
        import ctypes

        ctypes.pythonapi.PyRun_SimpleString(b"pass")
    except (ImportError, AttributeError, OSError):  # pragma: no cover - another interpreter: nothing to reset
        pass


def _run(args) -> int:
    """The chosen command, with its bad input as one sentence (exit 2)."""
    try:
        code = _module(args.command).run(args)
        sys.stdout.flush()  # inside the try: a reader gone before the last line is handled below, not at exit
        return code
    except BrokenPipeError:
        return _reader_gone()
    except MemoryInferError as error:
        print(f"memory-infer {args.command}: {error}.", file=sys.stderr)
        return 2


def _reader_gone() -> int:
    """Whoever read our output stopped early (``memory-infer waveform | head -1``): end quietly, as command-line
    tools do, with the exit status of a process ended by SIGPIPE (128 + 13). What is still buffered goes nowhere."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError):  # pragma: no cover - standard output not a file descriptor
        pass
    return 141


if __name__ == "__main__":
    sys.exit(main())
