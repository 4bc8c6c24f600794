"""Stage 5, catalog: per-event results combined with consistent-sign bookkeeping and the posterior of
a shared memory amplitude."""
