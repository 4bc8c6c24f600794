"""Stage 2, inputs: run configurations, noise curves and networks, strain/PSD/sample readers, physical
checks, one event's data and priors, and source populations."""
