"""Stage 7, reports: self-contained HTML pages drawn from result files alone."""
