"""Stage 4, inference: the memory likelihood, the hypotheses, the evidence methods (one strategy per
file in ``methods/``), one event's setup and its run."""
