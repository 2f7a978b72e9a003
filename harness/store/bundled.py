"""The data bundled in the wheel (``saltbench.refdata``) and contributed by plugins.

A store is brought up to date with the bundle whenever the bundle's fingerprint differs from
the one the store recorded, so a new saltbench release updates its reference data in place.
"""

from __future__ import annotations

import hashlib
from collections.abc import Callable
from importlib import resources
from pathlib import Path

from saltbench.curation.parameters import ParameterFile
from saltbench.store.connection import Store
from saltbench.store.ingest import IngestReport, ingest

META_KEY = "bundle_fingerprint"


def bundled_files() -> list[Path]:
    """Bibliographies first, then datasets, then parameter sets; examples are never included."""
    root = Path(str(resources.files("saltbench.refdata")))
    bibs = sorted(p for p in root.glob("*.txt") if p.name == "sources.txt" or p.name.endswith(".sources.txt"))
    data = sorted((root / "datasets").glob("*.csv"))
    params = sorted((root / "parameters").glob("*.csv"))
    return bibs + data + params


def fingerprint(files: list[tuple[str, Path]]) -> str:
    h = hashlib.sha256()
    for provider, path in files:
        h.update(provider.encode() + b"\0" + path.name.encode() + b"\0")
        h.update(path.read_bytes())
    return h.hexdigest()


def sync_bundled(store: Store, extra: list[tuple[str, Path]] | None = None, force: bool = False,
                 check_parameters: Callable[[ParameterFile], None] | None = None) -> IngestReport | None:
    """Bring the store's bundled data in line with the bundle (and plugin data). None if current."""
    files = [("saltbench", p) for p in bundled_files()] + list(extra or [])
    fp = fingerprint(files)
    if store.read_only or (not force and store.meta(META_KEY) == fp):
        return None  # a read-only store is used as it is: it may be a locked, validated one
    # Bibliographies of every provider go first so datasets can cite across providers.
    ordered = sorted(files, key=lambda fp_: 0 if fp_[1].suffix == ".txt" else 1)
    with store.transaction():
        report = ingest(store, [p for _, p in ordered], origin="bundled", provider="bundled", sync=True,
                        check_parameters=check_parameters)
        store.set_meta(META_KEY, fp)
    return report
