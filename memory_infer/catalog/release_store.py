"""A catalog run's event store: SQLite, one row per event, each write its own transaction.

One writer (the command's own process) commits each event's record as it arrives; a run killed at any moment
resumes on the same command without losing or repeating an event. Events are keyed by the digest of their
inputs, so an event whose settings or files changed runs again instead of serving its old result.
"""
from __future__ import annotations

import json
import sqlite3


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
