"""Stage 3, results: what every stage writes and reads back. Per-event results, catalog results and
campaign summaries as dataclasses with ``to_json``/``from_json`` and a schema version, the evidence
estimates they hold, the one rule that picks a preferred estimate, and the cautions reports carry."""
