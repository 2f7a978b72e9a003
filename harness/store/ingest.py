"""Loading files into the store: all of a command's files in one transaction, or none of them.

Every file is parsed and validated before anything is written; references between files
(dataset -> citation key) are resolved against the store plus the batch. Unchanged content
(same content hash) is a no-op; changed bundled content is updated in place; user data is
never touched by a bundled-data update.
"""

from __future__ import annotations

import hashlib
import json
import os
import sqlite3
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from saltbench import __version__
from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.ions import KNOWN_IONS, Ion
from saltbench.curation.bibliography import Source, read_bibliography
from saltbench.curation.blocks import read_text
from saltbench.curation.datasets import Dataset, read_dataset
from saltbench.curation.mixtures import MixtureDataset, read_mixture
from saltbench.curation.parameters import ParameterFile, read_parameter_file
from saltbench.errors import InputFileError, InputFileErrors, StoreError, UserError
from saltbench.store.connection import Store


@dataclass
class IngestReport:
    added: list[str] = field(default_factory=list)
    updated: list[str] = field(default_factory=list)
    unchanged: list[str] = field(default_factory=list)
    removed: list[str] = field(default_factory=list)

    @property
    def changed(self) -> bool:
        return bool(self.added or self.updated or self.removed)


@dataclass
class Batch:
    sources: list[Source] = field(default_factory=list)
    datasets: list[Dataset] = field(default_factory=list)
    parameter_files: list[ParameterFile] = field(default_factory=list)
    mixtures: list[MixtureDataset] = field(default_factory=list)


def expand_paths(paths: Sequence[str | os.PathLike[str]]) -> list[Path]:
    """The files named, a folder standing for its bibliographies (``*.sources.txt``,
    ``sources.txt``) and then its ``*.csv`` files."""
    out: list[Path] = []
    for p in map(Path, paths):
        if p.is_dir():
            bibs = sorted(q for q in p.glob("*.txt") if q.name == "sources.txt" or q.name.endswith(".sources.txt"))
            found = bibs + sorted(p.glob("*.csv"))
            if not found:
                # Adding nothing and saying nothing reads as success; the user meant some files.
                raise UserError(f"{p}: folder holds no bibliography (*.sources.txt, sources.txt) "
                                "or CSV file to add")
            out += found
        else:
            out.append(p)
    return out


def file_kind(path: str | Path, text: str) -> str:
    for line in text.splitlines():
        s = line.strip()
        if not s:
            continue
        if s.startswith("["):
            return "bibliography"
        low = s.lstrip("#").strip().lower()
        if low.startswith("saltbench dataset"):
            return "dataset"
        if low.startswith("saltbench parameters"):
            return "parameters"
        if low.startswith("saltbench readings"):
            return "readings"
        if low.startswith("saltbench mixture"):
            return "mixture"
        if s.startswith("#"):
            continue  # a comment above a bibliography's first entry
        break
    raise InputFileError(path, 1, None, "not a saltbench file: expected a bibliography ([key] "
                         "entries) or a first line '# saltbench dataset 1' / '# saltbench mixture 1' / "
                         "'# saltbench parameters 1'")


def parse_files(paths: Iterable[str | Path]) -> Batch:
    """Parse and validate every file (no store access). Every bad file is reported (one line
    each), not only the first: raises :class:`InputFileErrors` when any failed."""
    batch = Batch()
    seen_keys: dict[str, str] = {}
    problems: list[InputFileError] = []
    for path in paths:
        try:
            _parse_one(path, batch, seen_keys)
        except InputFileError as exc:
            problems.append(exc)
    if problems:
        raise problems[0] if len(problems) == 1 else InputFileErrors(problems)
    keys: dict[str, str] = {}
    named: list[Dataset | MixtureDataset] = [*batch.datasets, *batch.mixtures]
    for d in named:
        if d.key in keys:
            raise InputFileError(d.path, None, "id", f"dataset id {d.key!r} is also used by {keys[d.key]}")
        keys[d.key] = d.path
    return batch


def _parse_one(path: str | Path, batch: Batch, seen_keys: dict[str, str]) -> None:
    text = read_text(path)
    kind = file_kind(path, text)
    if kind == "bibliography":
        for s in read_bibliography(path):
            if s.key in seen_keys:
                raise InputFileError(path, s.line, "key", f"citation key {s.key!r} is also "
                                     f"defined in {seen_keys[s.key]}")
            seen_keys[s.key] = str(path)
            batch.sources.append(s)
    elif kind == "dataset":
        batch.datasets.append(read_dataset(path, text=text))
    elif kind == "parameters":
        batch.parameter_files.append(read_parameter_file(path))
    elif kind == "mixture":
        batch.mixtures.append(read_mixture(path, text=text))
    else:
        raise InputFileError(path, 1, None, "raw readings are loaded with 'saltbench readings add'")


def _source_hash(s: Source) -> str:
    doc = {k: getattr(s, k) for k in ("key", "authors", "title", "year", "journal", "publisher",
                                      "volume", "issue", "pages", "edition", "doi", "url", "note")}
    return hashlib.sha256(json.dumps(doc, sort_keys=True).encode()).hexdigest()


def _upsert_source(store: Store, s: Source, origin: str, report: IngestReport) -> None:
    h = _source_hash(s)
    row = store.conn.execute("SELECT content_hash, origin, file FROM sources WHERE key = ?", (s.key,)).fetchone()
    values = {
        "key": s.key, "authors": s.authors, "title": s.title, "year": s.year, "journal": s.journal,
        "publisher": s.publisher, "volume": s.volume, "issue": s.issue, "pages": s.pages,
        "edition": s.edition, "doi": s.doi, "url": s.url, "note": s.note, "citation": s.citation(),
        "origin": origin, "file": Path(s.file).name if origin == "bundled" else s.file, "content_hash": h,
    }
    if row is None:
        store.db.table("sources").insert(values)
        report.added.append(f"source {s.key}")
    elif row[0] == h:
        report.unchanged.append(f"source {s.key}")
    elif row[1] == origin:
        store.db.table("sources").update(s.key, values)
        report.updated.append(f"source {s.key}")
    else:
        raise InputFileError(s.file, s.line, "key", f"citation key {s.key!r} already exists in the "
                             f"store ({row[1]} entry from {row[2]}) with different content; "
                             "choose another key")


def _ensure_ion(store: Store, ion: Ion, origin: str, path: str) -> None:
    row = store.conn.execute("SELECT charge, molar_mass FROM ions WHERE formula = ?", (ion.formula,)).fetchone()
    if row is None:
        kind = "builtin" if KNOWN_IONS.get(ion.formula) == ion else origin
        store.db.table("ions").insert({"formula": ion.formula, "name": ion.name, "charge": ion.charge,
                                 "molar_mass": ion.molar_mass, "origin": kind})
    elif row[0] != ion.charge or abs(row[1] - ion.molar_mass) > 1e-9:
        raise InputFileError(path, None, "cation" if ion.charge > 0 else "anion",
                             f"ion {ion.formula} is already in the store with charge {row[0]:+d} and "
                             f"molar mass {row[1] * 1000:g} g/mol; this file declares {ion.charge:+d}, "
                             f"{ion.molar_mass * 1000:g} g/mol")


def _ensure_electrolyte(store: Store, e: Electrolyte, origin: str, declared: bool, path: str) -> None:
    _ensure_ion(store, e.cation, origin, path)
    _ensure_ion(store, e.anion, origin, path)
    row = store.conn.execute("SELECT cation, anion, nu_cation, nu_anion FROM electrolytes WHERE name = ?",
                             (e.name,)).fetchone()
    if row is None:
        store.db.table("electrolytes").insert({
            "name": e.name, "cation": e.cation.formula, "anion": e.anion.formula,
            "nu_cation": e.nu_cation, "nu_anion": e.nu_anion, "charge_type": e.charge_label,
            "molar_mass": e.molar_mass, "origin": origin if declared else "builtin"})
    elif tuple(row) != (e.cation.formula, e.anion.formula, e.nu_cation, e.nu_anion):
        raise InputFileError(path, None, "electrolyte", f"{e.name} is already in the store with "
                             "another composition")


def upsert_parent(store: Store, table: str, existing_pk: int | None, values: dict, child_table: str,
                  child_key: str, report: IngestReport, label: str) -> int:
    """Insert a parent row, or update it in place and clear its child rows; returns its key.

    Datasets (points), parameter sets (values) and measurement sets (readings) are all replaced
    this way, so a changed file updates its row instead of adding a second one.
    """
    if existing_pk is None:
        report.added.append(label)
        pk = store.db.table(table).insert(values).last_pk
        assert pk is not None  # an insert into a table with an integer key always sets last_pk
        return pk
    store.conn.execute(f"DELETE FROM {child_table} WHERE {child_key} = ?", (existing_pk,))
    store.db.table(table).update(existing_pk, values)
    report.updated.append(label)
    return existing_pk


def _same_points(store: Store, d: Dataset) -> tuple[str, str] | None:
    """(origin, key) of a stored dataset of the same electrolyte and property whose points are
    these (at each point's temperature, molality and value); None when there is none."""
    if d.point_temperature is None:  # every point at the header's temperature: as before 0009
        candidates = store.conn.execute(
            "SELECT id, origin, key FROM datasets WHERE electrolyte = ? AND property = ? AND n_points = ? "
            "AND abs(temperature_k - ?) < 0.01", (d.electrolyte.name, d.property, len(d.molality), d.temperature_k)
        ).fetchall()
        point_sql = "SELECT 0, molality, value FROM points WHERE dataset_id = ? ORDER BY molality"
        mine = sorted(zip([0.0] * len(d.molality), d.molality.tolist(), d.value.tolist()))
    else:
        t_min, t_max = d.temperature_range()
        candidates = store.conn.execute(
            "SELECT id, origin, key FROM datasets WHERE electrolyte = ? AND property = ? AND n_points = ? "
            "AND abs(COALESCE(t_min_k, temperature_k) - ?) < 0.01 "
            "AND abs(COALESCE(t_max_k, temperature_k) - ?) < 0.01",
            (d.electrolyte.name, d.property, len(d.molality), t_min, t_max)).fetchall()
        point_sql = ("SELECT round(COALESCE(p.temperature_k, d.temperature_k), 2) AS t, p.molality, p.value "
                     "FROM points p JOIN datasets d ON d.id = p.dataset_id WHERE p.dataset_id = ? "
                     "ORDER BY t, p.molality")
        mine = sorted(zip(np.round(d.point_temperatures(), 2).tolist(), d.molality.tolist(), d.value.tolist()))
    for pk, origin, key in candidates:
        theirs = store.conn.execute(point_sql, (pk,)).fetchall()
        if len(theirs) == len(mine) and all(t == s and abs(a - c) <= 1e-12 * max(1.0, abs(a)) and
                                            abs(b - e) <= 1e-12 * max(1.0, abs(b))
                                            for (t, a, b), (s, c, e) in zip(mine, theirs)):
            return origin, key
    return None


def _write_dataset(store: Store, d: Dataset, origin: str, provider: str, known_sources: set[str],
                   report: IngestReport) -> None:
    if d.source not in known_sources:
        raise InputFileError(d.path, d.source_line, "source", f"unknown citation key {d.source!r}: "
                             "add its entry to a bibliography file in the same command")
    _ensure_electrolyte(store, d.electrolyte, origin, bool(d.declared_ions), d.path)
    h = d.content_hash()
    row = store.conn.execute("SELECT id, content_hash FROM datasets WHERE origin = ? AND key = ?",
                             (origin, d.key)).fetchone()
    label = f"dataset {d.key}"
    if row is not None and row[1] == h:
        report.unchanged.append(label)
        return
    twin = _same_points(store, d)
    if twin is not None and twin != (origin, d.key):
        # a second copy of the same points would be counted twice, in fits and in cross-validation
        raise InputFileError(d.path, d.lines[0] if d.lines else None, None,
                             f"the same points as dataset {twin[1]} already in the store ({twin[0]}); "
                             "not added twice")
    values = {
        "key": d.key, "origin": origin, "provider": provider, "electrolyte": d.electrolyte.name,
        "property": d.property, "basis": d.basis, "scale": d.scale, "temperature_k": d.temperature_k,
        "pressure_pa": d.pressure_pa, "source": d.source, "table_ref": d.table,
        "precision": d.precision, "uncertainty": d.uncertainty, "typed": d.typed,
        "from_memory": int(d.from_memory), "note": d.note,
        "file": Path(d.path).name if origin == "bundled" else d.path, "content_hash": h,
        "n_points": len(d.molality),
    }
    # written only where a file has them (NULL reads as the dataset's temperature), so a file
    # without a temperature column or unit is stored exactly as before migration 0009
    if d.point_temperature is not None or d.unit:
        values.update({"t_min_k": d.temperature_range()[0], "t_max_k": d.temperature_range()[1],
                       "unit": d.unit})
    elif row is not None and "t_min_k" in store.db["datasets"].columns_dict:  # an update clears them
        values.update({"t_min_k": None, "t_max_k": None, "unit": ""})
    dataset_id = upsert_parent(store, "datasets", row[0] if row else None, values, "points", "dataset_id",
                               report, label)
    # a point's own last digit is stored only where the file gives one that differs (0003)
    own = bool(np.any(d.point_precision != d.precision))
    store.db.table("points").insert_all(
        {"dataset_id": dataset_id, "seq": i, "molality": float(m), "value": float(v),
         "value_printed": float(vp), "u_value": float(u), "line": int(n),
         **({"temperature_k": float(t)} if d.point_temperature is not None else {}),
         **({"precision": float(pp) if pp != d.precision else None} if own else {})}
        for i, (m, v, vp, u, n, pp, t) in enumerate(zip(d.molality, d.value, d.value_printed, d.u_value, d.lines,
                                                         d.point_precision, d.point_temperatures()))
    )


def _write_parameter_file(store: Store, pf: ParameterFile, origin: str, provider: str,
                          known_sources: set[str], report: IngestReport) -> None:
    if pf.source not in known_sources:
        raise InputFileError(pf.path, pf.source_line, "source", f"unknown citation key {pf.source!r}")
    h = pf.content_hash()
    row = store.conn.execute("SELECT id, content_hash, origin FROM parameter_sets WHERE set_id = ?",
                             (pf.set_id,)).fetchone()
    label = f"parameter set {pf.set_id}"
    if row is not None and row[1] == h:
        report.unchanged.append(label)
        return
    if row is not None and row[2] != origin:
        raise InputFileError(pf.path, pf.set_line, "set", f"parameter set id {pf.set_id!r} already exists "
                             f"in the store ({row[2]}); choose another id")
    values = {
        "set_id": pf.set_id, "kind": "published", "origin": origin, "provider": provider,
        "model": pf.model, "source": pf.source, "table_ref": pf.table, "temperature_k": pf.temperature_k,
        "a_phi": pf.a_phi, "typed": pf.typed, "from_memory": int(pf.from_memory), "note": pf.note,
        "file": Path(pf.path).name if origin == "bundled" else pf.path, "content_hash": h,
        "settings": "{}", "data_hashes": "[]", "software_version": __version__,
    }
    # the form's columns (0008) are written only where there is a form, or one to clear on an
    # update, so a set without one writes what it wrote before forms existed
    if pf.temperature_form is not None or (row is not None and "temperature_form" in
                                           store.db.table("parameter_sets").columns_dict):
        values.update({"temperature_form": pf.temperature_form,
                       "t_min_k": pf.temperature_range_k[0] if pf.temperature_range_k else None,
                       "t_max_k": pf.temperature_range_k[1] if pf.temperature_range_k else None})
    pk = upsert_parent(store, "parameter_sets", row[0] if row else None, values, "parameter_values", "set_pk",
                       report, label)
    store.db.table("parameter_values").insert_all(
        {"set_pk": pk, "target": r.target, "target_kind": pf.target_kind, "name": name,
         "value": value, "stderr": None, "m_max": r.m_max}
        for r in pf.rows for name, value in r.values.items()
    )
    coefficients = [{"set_pk": pk, "target": r.target, "name": name, "coefficient": k, "value": v}
                    for r in pf.rows for name, cs in r.coefficients.items() for k, v in cs.items()]
    if coefficients:
        store.db.table("parameter_coefficients").insert_all(coefficients)


def ingest(store: Store, paths: Sequence[str | Path], *, origin: str = "user",
           provider: str = "user", sync: bool = False,
           check_parameters: Callable[[ParameterFile], None] | None = None) -> IngestReport:
    """Load ``paths`` into ``store`` in one transaction.

    ``sync=True`` (bundled data only) also removes bundled datasets and parameter sets that are
    no longer among the files. ``check_parameters`` is called on each parameter file after it
    was read and before anything is written: the layers above the store check there what only
    they know (temperature forms and each model's parameters). Raises InputFileError (store
    unchanged) on the first problem.
    """
    batch = parse_files(paths)
    if check_parameters is not None:
        for pf in batch.parameter_files:
            check_parameters(pf)
    try:
        return _write_batch(store, batch, origin, provider, sync)
    except sqlite3.IntegrityError as exc:
        # The schema's own checks are the last line of defence; the file readers should have
        # caught the problem first. Either way the transaction was rolled back.
        raise StoreError(f"the store refused the data ({exc}); nothing was written") from None


def _write_batch(store: Store, batch: Batch, origin: str, provider: str, sync: bool) -> IngestReport:
    report = IngestReport()
    with store.transaction():
        for s in batch.sources:
            _upsert_source(store, s, origin, report)
        known = {r[0] for r in store.conn.execute("SELECT key FROM sources")}
        mixture_keys = _mixture_keys(store) if batch.datasets else set()
        for d in batch.datasets:
            if d.key in mixture_keys:
                raise InputFileError(d.path, None, "id", f"dataset id {d.key!r} is already used by a mixture "
                                     "dataset; choose another id")
            _write_dataset(store, d, origin, provider, known, report)
        for pf in batch.parameter_files:
            _write_parameter_file(store, pf, origin, provider, known, report)
        if batch.mixtures or (sync and store.db["mixture_datasets"].exists()):
            from saltbench.store import mixtures  # it builds on this module's helpers

            for md in batch.mixtures:
                mixtures.write_mixture(store, md, origin, provider, known, report)
            if sync:
                mixtures.remove_bundled_mixtures(store, {md.key for md in batch.mixtures}, report)
        if sync:
            keep = {d.key for d in batch.datasets}
            for pk, key in store.conn.execute(
                    "SELECT id, key FROM datasets WHERE origin = 'bundled'").fetchall():
                if key not in keep:
                    store.conn.execute("DELETE FROM datasets WHERE id = ?", (pk,))
                    report.removed.append(f"dataset {key}")
            keep_sets = {pf.set_id for pf in batch.parameter_files}
            for pk, sid in store.conn.execute(
                    "SELECT id, set_id FROM parameter_sets WHERE origin = 'bundled' AND kind = 'published'"
            ).fetchall():
                if sid not in keep_sets:
                    store.conn.execute("DELETE FROM parameter_sets WHERE id = ?", (pk,))
                    report.removed.append(f"parameter set {sid}")
    return report


def _mixture_keys(store: Store) -> set[str]:
    """Keys of the stored mixture datasets (none in a store from before migration 0005)."""
    if not store.db["mixture_datasets"].exists():
        return set()
    return {r[0] for r in store.conn.execute("SELECT key FROM mixture_datasets")}


def remove_dataset(store: Store, key: str, *, force: bool = False) -> list[str]:
    """Delete the user dataset ``key`` (its points with it) in one transaction; returns what was
    removed. Refuses, changing nothing, when a fitted parameter set was fitted to it or a
    reduction produced it, unless ``force`` (then those go too: they would no longer be
    reproducible)."""
    row = store.conn.execute("SELECT id, origin, content_hash FROM datasets WHERE key = ? "
                             "ORDER BY origin = 'user' DESC", (key,)).fetchone()
    if row is None and _mixture_keys(store):
        from saltbench.store.mixtures import remove_mixture

        removed_mixture = remove_mixture(store, key, force=force)
        if removed_mixture is not None:
            return removed_mixture
    if row is None:
        raise UserError(f"no dataset {key!r} in the store (see 'saltbench data show ELECTROLYTE')")
    pk, origin, h = row
    if origin != "user":
        raise UserError(f"dataset {key} is bundled with saltbench; only your own datasets can be removed")
    fitted = [sid for sid, hashes in store.conn.execute(
        "SELECT set_id, data_hashes FROM parameter_sets WHERE kind = 'fitted'") if h in json.loads(hashes or "[]")]
    reduced = [k for (k,) in store.conn.execute(
        "SELECT m.key FROM reductions r JOIN measurement_sets m ON m.id = r.set_id WHERE r.dataset_id = ?", (pk,))]
    if (fitted or reduced) and not force:
        deps = [f"parameter set {s}" for s in fitted] + [f"the reduction of measurement set {k}" for k in reduced]
        raise UserError(f"dataset {key} is used by {', '.join(deps)}; remove those first, or use --force to "
                        "remove them with it")
    removed = [f"dataset {key}"]
    with store.transaction():
        for sid in fitted:
            store.conn.execute("DELETE FROM parameter_sets WHERE set_id = ?", (sid,))
            removed.append(f"parameter set {sid}")
        store.conn.execute("DELETE FROM datasets WHERE id = ?", (pk,))
        removed += [f"reduction of {k}" for k in reduced]
    return removed
