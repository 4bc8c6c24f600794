"""Stage 0, shared by every stage: the user-facing error, atomic file writing, process tuning."""
