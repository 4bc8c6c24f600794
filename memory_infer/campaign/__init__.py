"""Stage 6, campaign: injection-recovery campaigns. Configuration and plan, one injection's simulation
and recovery (with the event's own evidence methods), the record store, executors (local or Dask),
and the summary (distributions, forecasts, PP test, calibration)."""
