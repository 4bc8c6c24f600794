"""A campaign's record store: SQLite, one row per finished injection, each insert its own transaction (a
catalog's events have theirs: :mod:`memory_infer.catalog.release_store`).

One writer (the command's own process) commits each record as it arrives; a run killed at any moment resumes on
the same command, recomputing only what had not been committed.
"""
from __future__ import annotations

import json
import sqlite3

from ..common.errors import MemoryInferError


class RecordStore:
    """SQLite store, one row per finished injection, each insert its own transaction."""

    def __init__(self, path: str, campaign_fingerprint: str):
        self.connection = sqlite3.connect(path)
        with self.connection:
            self.connection.execute("CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT)")
            self.connection.execute("CREATE TABLE IF NOT EXISTS records (id INTEGER PRIMARY KEY, record TEXT NOT NULL)")
        row = self.connection.execute("SELECT value FROM meta WHERE key = 'fingerprint'").fetchone()
        if row is None:
            with self.connection:
                self.connection.execute("INSERT INTO meta VALUES ('fingerprint', ?)", (campaign_fingerprint,))
        elif row[0] != campaign_fingerprint:
            self.connection.close()
            raise MemoryInferError("this output folder holds a campaign with other settings or injections; "
                                   "use a new --outdir")

    def done(self) -> set:
        return {row[0] for row in self.connection.execute("SELECT id FROM records")}

    def write(self, record: dict) -> None:
        with self.connection:
            self.connection.execute("INSERT INTO records VALUES (?, ?)", (int(record["index"]), json.dumps(record)))

    def records(self) -> list:
        return [json.loads(row[0]) for row in self.connection.execute("SELECT record FROM records ORDER BY id")]

    def close(self):
        self.connection.close()
