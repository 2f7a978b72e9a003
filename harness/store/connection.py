"""Opening a store: where it lives, schema version checks, migrations, transactions.

Location, first match wins: an explicit path (``--store PATH``), ``SALTBENCH_STORE``, then the
per-user default ``$XDG_DATA_HOME/saltbench/store.sqlite`` (``~/.local/share/...`` without it).
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import os
import sqlite3
import sys
from collections.abc import Iterator
from pathlib import Path
from typing import TYPE_CHECKING

from saltbench.errors import StoreError
from saltbench.store.schema import FOREIGN_KEYS_OFF, MIGRATIONS, SCHEMA_VERSION


def _import_sqlite_utils():
    """sqlite-utils imports pandas when it is installed, only to convert pandas values handed
    to it (its ``db`` module); the store never hands it any. Unless pandas is loaded already,
    it is hidden while sqlite-utils loads, so that a command returning no DataFrame does not
    pay about 0.4 s to import it (pandas stays importable afterwards, for the API's tables)."""
    if "sqlite_utils" in sys.modules or "pandas" in sys.modules:
        import sqlite_utils
        return sqlite_utils
    sys.modules["pandas"] = None  # type: ignore[assignment]  # import fails while this is set
    try:
        import sqlite_utils
    finally:
        del sys.modules["pandas"]
    return sqlite_utils


if TYPE_CHECKING:
    import sqlite_utils
else:
    sqlite_utils = _import_sqlite_utils()

ENV_STORE = "SALTBENCH_STORE"
BUSY_TIMEOUT_S = 60.0


def default_store_path() -> Path:
    base = os.environ.get("XDG_DATA_HOME") or os.path.join(os.path.expanduser("~"), ".local", "share")
    return Path(base) / "saltbench" / "store.sqlite"


def resolve_store_path(path: str | os.PathLike[str] | None = None) -> Path:
    if path:
        return Path(path)
    if os.environ.get(ENV_STORE):
        return Path(os.environ[ENV_STORE])
    return default_store_path()


def _now() -> str:
    return _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")


class Store:
    """A saltbench store: an SQLite file reached through sqlite-utils."""

    def __init__(self, db: sqlite_utils.Database, path: Path | None, read_only: bool = False):
        self.db = db
        self.path = path
        #: opened read-only (a locked, validated store, or one on a read-only file system): reading
        #: commands work; a writing one gets a one-line error
        self.read_only = read_only

    @property
    def conn(self) -> sqlite3.Connection:
        return self.db.conn

    @contextlib.contextmanager
    def transaction(self) -> Iterator[Store]:
        """One write transaction, taken with the write lock up front (BEGIN IMMEDIATE), so two
        processes adding data queue behind each other instead of failing half-way."""
        if self.read_only:
            raise StoreError(f"store {self.path} is read-only (its file or folder cannot be written); "
                             "nothing was written. Use another store (--store) to add or fit.")
        if self.conn.in_transaction:
            with self.db.atomic():
                yield self
            return
        try:
            self.conn.execute("BEGIN IMMEDIATE")
        except sqlite3.OperationalError as exc:
            # Another writer held the lock for longer than the busy timeout: a message, not a
            # traceback, and nothing was written.
            raise StoreError(f"store {self.path or ':memory:'} is busy ({exc}); another process "
                             f"kept it locked for over {BUSY_TIMEOUT_S:g} s. Nothing was written; "
                             "try again.") from None
        try:
            yield self
        except BaseException:
            if self.conn.in_transaction:
                self.conn.execute("ROLLBACK")
            raise
        else:
            self.conn.execute("COMMIT")

    def schema_version(self) -> int:
        return int(self.conn.execute("PRAGMA user_version").fetchone()[0])

    def meta(self, key: str) -> str | None:
        row = self.conn.execute("SELECT value FROM meta WHERE key = ?", (key,)).fetchone()
        return row[0] if row else None

    def set_meta(self, key: str, value: str) -> None:
        self.conn.execute("INSERT INTO meta (key, value) VALUES (?, ?) "
                          "ON CONFLICT(key) DO UPDATE SET value = excluded.value", (key, value))

    def close(self) -> None:
        self.conn.close()


def _connect(target: str, uri: bool = False) -> sqlite3.Connection:
    conn = sqlite3.connect(target, timeout=BUSY_TIMEOUT_S, isolation_level=None, uri=uri)
    conn.execute("PRAGMA foreign_keys = ON")
    return conn


def migrate(store: Store) -> list[str]:
    """Apply every migration the store lacks, each in its own transaction."""
    version = store.schema_version()
    if version > SCHEMA_VERSION:
        raise StoreError(
            f"store {store.path} has schema version {version}, newer than this saltbench "
            f"understands ({SCHEMA_VERSION}); upgrade saltbench or use another store. "
            "The store was not changed.")
    applied = []
    for number, (name, sql) in enumerate(MIGRATIONS, start=1):
        if number <= version:
            continue
        keys_off = name in FOREIGN_KEYS_OFF
        if keys_off:  # a no-op inside a transaction, so set before it begins
            store.conn.execute("PRAGMA foreign_keys = OFF")
        try:
            _apply(store, number, name, sql, keys_off)
        finally:
            if keys_off:
                store.conn.execute("PRAGMA foreign_keys = ON")
        applied.append(name)
    return applied


def _apply(store: Store, number: int, name: str, sql: str, check_keys: bool) -> None:
    """One migration in its own transaction; ``check_keys`` runs foreign_key_check before commit."""
    with store.transaction():
        if number == 1:
            store.conn.execute("CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT NOT NULL)")
            store.conn.execute("CREATE TABLE IF NOT EXISTS migrations (number INTEGER PRIMARY KEY, "
                               "name TEXT NOT NULL, applied_at TEXT NOT NULL)")
        for statement in _statements(sql):
            store.conn.execute(statement)
        store.conn.execute("INSERT INTO migrations (number, name, applied_at) VALUES (?, ?, ?)",
                           (number, name, _now()))
        if check_keys and store.conn.execute("PRAGMA foreign_key_check").fetchone() is not None:
            raise StoreError(f"migration {name} would break a foreign key; the store was not changed")
        store.conn.execute(f"PRAGMA user_version = {number}")


def _statements(sql: str) -> list[str]:
    # Our migrations hold plain DDL without semicolons inside strings or triggers.
    return [s.strip() for s in sql.split(";") if s.strip()]


def open_store(path: str | os.PathLike[str] | None = None, *, memory: bool = False,
               create: bool = True) -> Store:
    """Open (and create, migrate) a store. ``memory=True`` gives a throwaway in-memory store."""
    if memory:
        store = Store(sqlite_utils.Database(_connect(":memory:")), None)
    else:
        p = resolve_store_path(path)
        if p.exists() and p.is_dir():
            raise StoreError(f"store path {p} is a directory")
        if not p.exists():
            if not create:
                raise StoreError(f"no store at {p}")
            try:
                p.parent.mkdir(parents=True, exist_ok=True)
            except OSError as exc:
                raise StoreError(f"cannot create the folder for store {p}: {exc.strerror}") from None
        else:
            with open(p, "rb") as fh:
                head = fh.read(16)
            if head and head != b"SQLite format 3\x00":
                raise StoreError(f"{p} is not a saltbench store (not an SQLite file)")
        read_only = p.exists() and not (os.access(p, os.W_OK) and os.access(p.parent, os.W_OK))
        try:
            if read_only:
                # immutable: no lock and no -wal/-shm files, which a read-only folder cannot hold
                conn = _connect(f"{p.resolve().as_uri()}?immutable=1", uri=True)
            else:
                conn = _connect(str(p))
                # Switching to WAL rewrites the file header, so a store we will refuse (newer
                # schema) must be refused before it, or it would no longer be byte-for-byte unchanged.
                if int(conn.execute("PRAGMA user_version").fetchone()[0]) <= SCHEMA_VERSION:
                    conn.execute("PRAGMA journal_mode = WAL")
        except sqlite3.DatabaseError as exc:
            raise StoreError(f"cannot open store {p}: {exc}") from None
        store = Store(sqlite_utils.Database(conn), p, read_only)
    try:
        if store.read_only:
            if store.schema_version() != SCHEMA_VERSION:
                raise StoreError(f"store {p} is read-only and at schema version {store.schema_version()}, not "
                                 f"{SCHEMA_VERSION}: open it once where it can be written to upgrade it")
        else:
            migrate(store)
    except StoreError:
        store.close()
        raise
    return store
