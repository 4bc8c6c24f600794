"""Redraw the README's figure from a demo run: the posterior of the memory amplitude for heron-01, drawn by the
same function as that event's report page.

    memory-infer demo --outdir demo-out
    python scripts/demo_figure.py demo-out            # writes memory_infer/demo_files/demo_amplitude.png
"""
import argparse
import os
import sys

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, ROOT)
TARGET = os.path.join(ROOT, "memory_infer", "demo_files", "demo_amplitude.png")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("demo_outdir", help="the folder given to memory-infer demo --outdir")
    parser.add_argument("--event", default="heron-01", help="the demo event to draw (heron-01 has the free-A run)")
    parser.add_argument("--output", default=TARGET, help="where to write the PNG")
    args = parser.parse_args(argv)
    from memory_infer.common.errors import MemoryInferError
    from memory_infer.reports.event import draw_amplitude
    from memory_infer.results.event import EventResult

    path = os.path.join(args.demo_outdir, "events", args.event, EventResult.FILE)
    try:
        result = EventResult.load(path)
    except MemoryInferError as error:
        print(f"demo_figure: {error}", file=sys.stderr)
        return 2
    figure = draw_amplitude(result)
    axis = figure.axes[0]
    axis.set_title(f"memory amplitude A for the invented demo event {args.event}", fontsize=9)
    figure.savefig(args.output, dpi=100, bbox_inches="tight")
    print(f"wrote {args.output} from {path}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
