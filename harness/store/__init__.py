"""The SQLite store (through sqlite-utils): migrations, transactional ingest, queries."""

from saltbench.store.connection import Store, open_store, resolve_store_path
from saltbench.store.ingest import IngestReport, ingest

__all__ = ["Store", "open_store", "resolve_store_path", "IngestReport", "ingest"]
