"""The record stores: SQLite, one row per finished injection (campaigns) or event (catalogs), each insert its own
transaction.

One writer (the command's own process) commits each record as it arrives; a run killed at any moment resumes on
the same command, recomputing only what had not been committed. A catalog's events are keyed by the digest of
their inputs, so an event whose settings or files changed runs again instead of serving its old result.
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


class EventStore:
    """A catalog's events in SQLite: one row per event label with the digest of the inputs (settings and file
    contents) it ran from, each write its own transaction; and the content digests of files by path, size and
    modification time, so that a file is read for its digest once."""

    def __init__(self, path: str):
        self.connection = sqlite3.connect(path)
        with self.connection:
            self.connection.execute("CREATE TABLE IF NOT EXISTS events (label TEXT PRIMARY KEY, digest TEXT NOT NULL, "
                                    "record TEXT NOT NULL)")
            self.connection.execute("CREATE TABLE IF NOT EXISTS files (path TEXT PRIMARY KEY, size INTEGER, "
                                    "modified INTEGER, digest TEXT)")

    def stored(self) -> dict:
        """label -> (digest, record) of every stored event."""
        return {label: (digest, json.loads(record))
                for label, digest, record in self.connection.execute("SELECT label, digest, record FROM events")}

    def write(self, record: dict, digest: str) -> None:
        with self.connection:
            self.connection.execute("INSERT OR REPLACE INTO events VALUES (?, ?, ?)",
                                    (str(record["label"]), digest, json.dumps(record)))

    def file_digest(self, path: str, size: int, modified: int, compute) -> str:
        """The stored content digest of ``path`` when its size and modification time are unchanged, else
        ``compute()`` (stored for next time)."""
        row = self.connection.execute("SELECT size, modified, digest FROM files WHERE path = ?", (path,)).fetchone()
        if row is not None and row[0] == size and row[1] == modified:
            return row[2]
        digest = compute()
        with self.connection:
            self.connection.execute("INSERT OR REPLACE INTO files VALUES (?, ?, ?, ?)", (path, size, modified, digest))
        return digest

    def close(self):
        self.connection.close()
