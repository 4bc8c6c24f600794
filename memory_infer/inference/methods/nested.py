"""Nested sampling (dynesty through bilby): one run per hypothesis, ln BF = ln Z_1 - ln Z_0 with
dynesty's errors added in quadrature; the free-amplitude run gives the posterior of A."""
from __future__ import annotations

import contextlib
import logging
import os
import signal
import sys

import numpy as np

from ...common.errors import MemoryInferError
from ...common.writing import read_json, write_json
from ...results.estimates import EvidenceEstimate, SignSummary, sign_weight
from ...results.methods import NESTED as DESCRIPTION
from ..digests import nested_run_inputs
from ..hypotheses import FLIPPED, FREE, HYPOTHESES, MEMORY, NONE
from .base import EvidenceMethod, Found, RunState

logger = logging.getLogger("memory_infer")


def checkpoint_exists(outdir: str, label: str) -> bool:
    return os.path.exists(os.path.join(outdir, f"{label}_resume.pickle"))


def inputs_path(outdir: str, label: str) -> str:
    """The record, beside a run's checkpoint, of the digests of what the run depends on."""
    return os.path.join(outdir, f"{label}_inputs.json")


def keep_or_discard_checkpoint(outdir: str, label: str, inputs: dict | None) -> str | None:
    """Resume a checkpoint only if it was made from the same inputs (:mod:`memory_infer.inference.digests`);
    otherwise remove it, so the run starts afresh, and return one sentence naming what changed. Then record this
    run's inputs beside the checkpoint it will write."""
    from ..digests import changed_parts

    if inputs is None:
        return None
    note, path = None, inputs_path(outdir, label)
    if checkpoint_exists(outdir, label):
        try:
            stored = read_json(path, "the record of a checkpoint's inputs")
        except MemoryInferError:
            stored = None
        changed = changed_parts(stored, inputs)
        if changed:
            made = ("holds no record of its inputs" if stored is None
                    else f"was made with other {' and '.join(changed)} than this run's")
            note = f"nested run '{label}' started afresh: its checkpoint in {outdir} {made}"
            os.remove(os.path.join(outdir, f"{label}_resume.pickle"))
    os.makedirs(outdir, exist_ok=True)
    write_json(path, inputs)
    return note


def run_nested(likelihood, priors, label: str, outdir: str, live_points: int = 200, accepted_walks: int = 30,
               pool: int = 1, seed: int | None = None, checkpoint_seconds: float = 60.0, progress: bool = True,
               inputs: dict | None = None):
    """One dynesty run through bilby; checkpoints to ``outdir`` and resumes from there when rerun with the same
    ``inputs`` (digests of what the run depends on); a checkpoint made from other inputs is discarded, with a
    warning naming what changed."""
    import bilby

    note = keep_or_discard_checkpoint(outdir, label, inputs)
    if note:
        logger.warning("%s", note)
    elif checkpoint_exists(outdir, label):
        logger.info("resuming nested run '%s' from its checkpoint in %s (same priors, data, model and sampler "
                    "settings)", label, outdir)
    with interrupt_in_one_line():
        return bilby.run_sampler(
            likelihood=likelihood, priors=priors, sampler="dynesty", nlive=int(live_points), sample="acceptance-walk",
            naccept=int(accepted_walks), npool=int(pool), outdir=outdir, label=label, resume=True,
            check_point_delta_t=float(checkpoint_seconds), rstate=np.random.default_rng(seed), print_progress=progress,
            save="json", plot=False, check_point_plot=False)


def _checkpoint_and_stop(sampler, signum=None, frame=None):
    """Ctrl-C (or SIGTERM) during a run: checkpoint as bilby does, then one line and exit status 130.

    bilby's own handler ends the run with ``sys.exit`` from inside the likelihood call, and dynesty prints that
    call's parameters and a long traceback before letting it pass; ending the process here avoids both. As in
    bilby, only the process that owns the sampler (not a pool worker) checkpoints and exits; in a campaign's
    worker, Ctrl-C is left to the campaign."""
    if sampler.npool not in (1, None) and getattr(sampler, "pool", None) is None:
        return
    if signum == signal.SIGINT and os.environ.get("MEMORY_INFER_CAMPAIGN_WORKER"):  # set by campaign.executors
        return  # a campaign's worker: Ctrl-C is the campaign's to handle (it ends its workers)
    kept = f"its checkpoint in {sampler.outdir} resumes it when the same command runs again"
    try:
        if getattr(sampler, "pbar", None) is not None:
            sampler.pbar = sampler.pbar.close()
        sampler.write_current_state()
        sampler._close_pool()
    except Exception:  # noqa: BLE001 - interrupted before the sampler had a state: nothing to keep
        kept = "nothing of it was kept"
    sys.stdout.flush()
    sys.stderr.write(f"memory-infer: interrupted during nested run '{sampler.label}'; {kept}.\n")
    sys.stderr.flush()
    os._exit(int(getattr(sampler, "exit_code", 130) or 130))


@contextlib.contextmanager
def interrupt_in_one_line():
    """While a bilby dynesty run is on, its interruption handler is :func:`_checkpoint_and_stop`."""
    from bilby.core.sampler.dynesty import Dynesty

    previous = Dynesty.__dict__.get("write_current_state_and_exit")
    Dynesty.write_current_state_and_exit = _checkpoint_and_stop
    try:
        yield
    finally:
        if previous is None:
            del Dynesty.write_current_state_and_exit
        else:
            Dynesty.write_current_state_and_exit = previous


def nested_bayes_factor(numerator_result, denominator_result, numerator="memory", denominator="none"):
    """``ln Z_1 - ln Z_0`` with dynesty's errors added in quadrature."""
    ln_bf = float(numerator_result.log_evidence - denominator_result.log_evidence)
    error = float(np.hypot(numerator_result.log_evidence_err, denominator_result.log_evidence_err))
    return EvidenceEstimate(method=f"{DESCRIPTION.label} (dynesty through bilby)", ln_bf=ln_bf, ln_bf_err=error,
                            numerator=numerator, denominator=denominator,
                            number_of_samples=int(len(numerator_result.posterior) + len(denominator_result.posterior)),
                            note="ln Z difference of two runs on the same data, priors and sampler settings",
                            family=DESCRIPTION.family)


def sign_from_nested(plus: EvidenceEstimate, minus: EvidenceEstimate, plus_run_error: float,
                     minus_run_error: float) -> SignSummary:
    """Sign bookkeeping from two nested-sampling Bayes factors (A = +1 and A = -1 against 0).

    The sign ln BF is ln Z(+1) - ln Z(-1): the shared A = 0 run cancels, so its error is that of the two
    runs' ln Z, ``hypot(s(+1), s(-1))`` (not the quadrature of the two Bayes factors' errors)."""
    sign_error = float(np.hypot(plus_run_error, minus_run_error))
    return SignSummary(ln_bf_plus=plus.ln_bf, ln_bf_plus_err=plus.ln_bf_err, ln_bf_minus=minus.ln_bf,
                       ln_bf_minus_err=minus.ln_bf_err, ln_bf_sign=plus.ln_bf - minus.ln_bf,
                       ln_bf_sign_err=sign_error, weight_plus=sign_weight(plus.ln_bf, minus.ln_bf), method=plus.method,
                       note="weight_plus = BF+ / (BF+ + BF-); sign error from the A = +1 and A = -1 runs' own "
                            "errors (the A = 0 run cancels)")


class NestedSampling(EvidenceMethod):
    """Runs ``[evidence] nested_hypotheses`` with ``[sampler]`` settings; seeds are the sampler's seed
    plus the hypothesis's position in that list. Leaves its runs in ``state.nested`` for later methods."""

    name = "nested"
    describes = (DESCRIPTION,)

    def run(self, state: RunState) -> Found:
        settings = state.setup.settings
        sampler = settings.sampler
        outdir = os.path.join(state.outdir, "runs")
        for index, name in enumerate(settings.evidence.nested_hypotheses):
            if name not in HYPOTHESES:
                raise MemoryInferError(f"unknown hypothesis '{name}' in [evidence] nested_hypotheses")
            hypothesis = HYPOTHESES[name]
            likelihood, priors = state.setup.likelihood(hypothesis)
            logger.info("%s: nested sampling, hypothesis '%s'", state.label, hypothesis)
            seed = int(sampler.seed) + index
            inputs = nested_run_inputs(state.setup, priors, {"live_points": int(sampler.live_points),
                                                             "accepted_walks": int(sampler.accepted_walks),
                                                             "seed": seed})
            state.nested[hypothesis] = run_nested(
                likelihood, priors, label=f"{state.label}_{hypothesis}", outdir=outdir,
                live_points=sampler.live_points, accepted_walks=sampler.accepted_walks, pool=sampler.pool,
                seed=seed, checkpoint_seconds=sampler.checkpoint_seconds,
                progress=bool(sampler.progress) and state.progress, inputs=inputs)
        runs, found = state.nested, Found()
        for numerator in (MEMORY, FLIPPED):
            if numerator in runs and NONE in runs:
                found.estimates.append(nested_bayes_factor(runs[numerator], runs[NONE], numerator.name, NONE.name))
        if FREE in runs:
            values = runs[FREE].posterior["memory_amplitude"].to_numpy()
            low, median, high = np.quantile(values, [0.05, 0.5, 0.95])
            found.free_amplitude = {"median": float(median), "lower_90": float(low), "upper_90": float(high),
                                    "method": "nested sampling with A free, equal-weight posterior samples",
                                    "samples": values.tolist()}
        if len(found.estimates) == 2:
            plus, minus = found.estimates
            found.signs[DESCRIPTION.family] = sign_from_nested(plus, minus, runs[MEMORY].log_evidence_err,
                                                               runs[FLIPPED].log_evidence_err)
        return found
