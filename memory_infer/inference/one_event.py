"""One event from its typed settings to its :class:`memory_infer.results.event.EventResult`: every input read and
checked first, then the output folder made, then every configured method run, all of bilby's random draws (noise,
prior draws, equal-weight resampling) coming from one generator seeded with the event's ``[data] seed``. The same
steps for the evidence command, each event of a catalog and each event of the demo."""
from __future__ import annotations

from ..common.writing import output_folder, provenance
from ..results.event import EventResult
from .runner import run_event
from .setup import prepare


def run_one_event(settings, outdir: str, progress: bool = True, command: list | None = None) -> EventResult:
    """The result of one event (``settings``: :class:`memory_infer.inputs.settings.AnalysisSettings`), its runs
    kept in ``outdir``; raises MemoryInferError (one sentence) on bad input before ``outdir`` is made. The result's
    provenance records the resolved settings, the sampler's seed and ``command`` (default: this process's command
    line)."""
    import numpy as np

    from ..inputs.event_data import bilby_draws_from

    rng = np.random.default_rng(settings.data.seed)
    with bilby_draws_from(rng):  # bilby's own draws from this event's generator, the previous one restored after
        setup = prepare(settings, rng)
        output_folder(outdir)
        result = run_event(setup, outdir, progress=progress)
    result.provenance = provenance(setup.settings.as_mapping(), settings.sampler.seed)
    if command is not None:
        result.provenance["command"] = list(command)
    return result
