"""A persistent descriptor cache shared by every process on the machine.

SQLite in write-ahead-log mode (readers never block the writer; several processes may
write), keyed by (tier, descriptor-code version, canonical SMILES). Values are JSON text,
never pickles. A library of a million rows built from a few hundred substituents computes
each substituent once, here or in any earlier run.

Location: ``--cache-dir`` if given, else ``$BARRIERSCOPE_CACHE_DIR``, else
``$XDG_CACHE_HOME/barrierscope`` (``~/.cache/barrierscope``). ``BARRIERSCOPE_CACHE_DIR=none``
turns the persistent cache off (an in-memory one is still used within a run).
"""

from __future__ import annotations

import json
import math
import os
import sqlite3
import time
from pathlib import Path

_SCHEMA = """
CREATE TABLE IF NOT EXISTS entries (
    tier    TEXT NOT NULL,
    version TEXT NOT NULL,
    key     TEXT NOT NULL,
    payload TEXT NOT NULL,
    PRIMARY KEY (tier, version, key)
) WITHOUT ROWID
"""


def default_cache_dir() -> Path | None:
    env = os.environ.get("BARRIERSCOPE_CACHE_DIR")
    if env:
        return None if env.strip().lower() in ("none", "off", "0") else Path(env)
    base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
    return Path(base) / "barrierscope"


def _encode(value) -> str:
    """JSON with NaN written as null (standard JSON has no NaN)."""
    def clean(v):
        if isinstance(v, float) and not math.isfinite(v):
            return None
        if isinstance(v, dict):
            return {k: clean(x) for k, x in v.items()}
        if isinstance(v, (list, tuple)):
            return [clean(x) for x in v]
        return v
    return json.dumps(clean(value), separators=(",", ":"), allow_nan=False)


def _decode(text: str):
    def restore(v):
        if v is None:
            return float("nan")
        if isinstance(v, dict):
            return {k: restore(x) for k, x in v.items()}
        if isinstance(v, list):
            return [restore(x) for x in v]
        return v
    return restore(json.loads(text))


class DescriptorCache:
    """get/put of JSON payloads by (tier, version, key); thread-unsafe, process-safe."""

    def __init__(self, folder: str | os.PathLike | None = "default", timeout: float = 60.0):
        if folder == "default":
            folder = default_cache_dir()
        self.folder = Path(folder) if folder is not None else None
        self.timeout = timeout
        self._conn: sqlite3.Connection | None = None
        self._pid: int | None = None

    @property
    def path(self) -> Path | None:
        return None if self.folder is None else self.folder / "descriptors.sqlite"

    def __getstate__(self):  # connections do not cross process boundaries
        return {"folder": self.folder, "timeout": self.timeout}

    def __setstate__(self, state):
        self.__init__(state["folder"], state["timeout"])

    def _connect(self) -> sqlite3.Connection | None:
        if self.folder is None:
            return None
        if self._conn is not None and self._pid == os.getpid():
            return self._conn
        self.folder.mkdir(parents=True, exist_ok=True)
        conn = sqlite3.connect(self.path, timeout=self.timeout, isolation_level=None)
        conn.execute("PRAGMA busy_timeout = %d" % int(self.timeout * 1000))
        self._retry(lambda: conn.execute("PRAGMA journal_mode = WAL"))
        conn.execute("PRAGMA synchronous = NORMAL")
        self._retry(lambda: conn.execute(_SCHEMA))
        self._conn, self._pid = conn, os.getpid()
        return conn

    def _retry(self, action, attempts: int = 50):
        for k in range(attempts):
            try:
                return action()
            except sqlite3.OperationalError as exc:
                if "locked" not in str(exc) and "busy" not in str(exc) or k == attempts - 1:
                    raise
                time.sleep(0.05 * (1 + k % 5))

    def get_many(self, tier: str, version: str, keys) -> dict[str, object]:
        conn = self._connect()
        keys = list(keys)
        if conn is None or not keys:
            return {}
        out: dict[str, object] = {}
        for start in range(0, len(keys), 500):
            part = keys[start:start + 500]
            marks = ",".join("?" * len(part))
            rows = self._retry(lambda: conn.execute(
                f"SELECT key, payload FROM entries WHERE tier = ? AND version = ? AND key IN ({marks})",
                [tier, version, *part]).fetchall())
            for key, payload in rows:
                out[key] = _decode(payload)
        return out

    def put_many(self, tier: str, version: str, items: dict[str, object]) -> None:
        conn = self._connect()
        if conn is None or not items:
            return
        rows = [(tier, version, k, _encode(v)) for k, v in items.items()]

        def write():
            conn.execute("BEGIN IMMEDIATE")
            try:
                conn.executemany("INSERT OR IGNORE INTO entries (tier, version, key, payload) VALUES (?, ?, ?, ?)", rows)
                conn.execute("COMMIT")
            except BaseException:
                conn.execute("ROLLBACK")
                raise
        self._retry(write)

    def count(self, tier: str | None = None) -> int:
        conn = self._connect()
        if conn is None:
            return 0
        if tier is None:
            return conn.execute("SELECT COUNT(*) FROM entries").fetchone()[0]
        return conn.execute("SELECT COUNT(*) FROM entries WHERE tier = ?", (tier,)).fetchone()[0]

    def integrity_ok(self) -> bool:
        conn = self._connect()
        return conn is None or conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"

    def close(self) -> None:
        if self._conn is not None and self._pid == os.getpid():
            self._conn.close()
        self._conn = None
