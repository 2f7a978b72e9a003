"""Electrode calibrations and pH-buffer calibrations in the store (migration
``0007_electrode_readings``): ``electrode_sets`` (one per file, keyed by its id) and
``electrode_rows`` (its readings in SI, each with its own salts as JSON). Written inside the
transaction of ``readings add``; a changed file replaces its set's rows in place.
"""

from __future__ import annotations

import json

from saltbench.chemistry.species import parse_species
from saltbench.curation.electrode_readings import (
    ElectrodeRow,
    ElectrodeSet,
    salts_from_json,
    salts_to_json,
)
from saltbench.errors import InputFileError, UserError
from saltbench.store.connection import Store
from saltbench.store.ingest import IngestReport, upsert_parent


def check_source(ms: ElectrodeSet, known_sources: set[str]) -> None:
    if ms.source not in known_sources:
        raise InputFileError(ms.path, ms.source_line, "source", f"unknown citation key "
                             f"{ms.source!r}: add its entry (a paper, your lab notebook page or the "
                             "buffer certificates) to a bibliography file in the same command")


def write_set(store: Store, ms: ElectrodeSet, report: IngestReport) -> None:
    """Insert or replace one electrode set (call inside a transaction)."""
    h = ms.content_hash()
    row = store.conn.execute("SELECT id, content_hash FROM electrode_sets WHERE key = ?",
                             (ms.key,)).fetchone()
    label = f"electrode set {ms.key}"
    if row is not None and row[1] == h:
        report.unchanged.append(label)
        return
    if store.conn.execute("SELECT 1 FROM measurement_sets WHERE key = ?", (ms.key,)).fetchone():
        raise InputFileError(ms.path, None, "id", f"{ms.key!r} is already the id of a measurement set")
    values = {
        "key": ms.key, "kind": ms.kind, "ion": ms.ion.name if ms.ion else None,
        "interferents": json.dumps([i.name for i in ms.interferents]),
        "background": salts_to_json(ms.background), "background_text": ms.background_text,
        "temperature_k": ms.temperature_k, "u_temperature_k": ms.u_temperature_k,
        "reference_electrode": ms.reference_electrode, "electrode": ms.electrode,
        "source": ms.source, "typed": ms.typed, "from_memory": int(ms.from_memory), "note": ms.note,
        "file": ms.path, "content_hash": h, "n_rows": len(ms.rows),
    }
    pk = upsert_parent(store, "electrode_sets", row[0] if row else None, values, "electrode_rows",
                       "set_id", report, label)
    store.db.table("electrode_rows").insert_all(
        {"set_id": pk, "seq": i, "role": r.role, "label": r.label, "salts": salts_to_json(r.salts),
         "emf_v": r.emf, "u_emf_v": r.u_emf, "temperature_k": r.temperature_k, "ph": r.ph,
         "u_ph": r.u_ph, "ionic_strength": r.ionic_strength, "line": r.line}
        for i, r in enumerate(ms.rows))


def _ion(name: str):
    return parse_species(name).parts[0][0]


def load_set(store: Store, key: str) -> ElectrodeSet:
    """A stored electrode set, back as an :class:`ElectrodeSet`."""
    row = store.conn.execute(
        "SELECT id, key, kind, ion, interferents, background, background_text, temperature_k, "
        "u_temperature_k, reference_electrode, electrode, source, typed, note, file "
        "FROM electrode_sets WHERE key = ?", (key,)).fetchone()
    if row is None:
        known = ", ".join(keys(store))
        raise UserError(f"no electrode set {key!r} in the store; known: {known or 'none'}")
    (pk, key, kind, ion, interferents, background, background_text, t, u_t, reference, electrode,
     source, typed, note, file) = row
    rows = tuple(
        ElectrodeRow(int(r[9]) if r[9] is not None else 0, r[0], r[1], salts_from_json(r[2]),
                     float(r[3]), float(r[4]), float(r[5]), r[6], r[7], r[8])
        for r in store.conn.execute(
            "SELECT role, label, salts, emf_v, u_emf_v, temperature_k, ph, u_ph, ionic_strength, "
            "line FROM electrode_rows WHERE set_id = ? ORDER BY seq", (pk,)))
    return ElectrodeSet(key, file, kind, float(t), float(u_t), reference, electrode, source, typed,
                        note, rows, _ion(ion) if ion else None,
                        tuple(_ion(n) for n in json.loads(interferents)),
                        salts_from_json(background), background_text)


def keys(store: Store) -> list[str]:
    return [r[0] for r in store.conn.execute("SELECT key FROM electrode_sets ORDER BY key")]


def list_sets(store: Store) -> list[dict]:
    """One record per electrode set."""
    sql = ("SELECT s.key, s.kind, s.ion, s.temperature_k, s.n_rows, s.source, s.from_memory, s.file, "
           "(SELECT count(*) FROM electrode_rows r WHERE r.set_id = s.id AND r.role IN "
           "('standard', 'buffer')) AS n_calibration, "
           "(SELECT count(*) FROM electrode_rows r WHERE r.set_id = s.id AND r.role = 'sample') "
           "AS n_samples FROM electrode_sets s ORDER BY s.key")
    return [dict(r) for r in store.db.query(sql)]
