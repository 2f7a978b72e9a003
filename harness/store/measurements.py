"""Raw measurement sets in the store, and the datasets reduced from them.

Tables (migration ``0002_measurements``): ``measurement_sets`` (one per readings file, keyed by
its id), ``readings`` (the rows, in SI) and ``reductions`` (one per set: the method and version
that reduced it, a hash of the readings it used, and the reduced dataset it wrote). A reduced
dataset is an ordinary user dataset; re-reducing a set updates that dataset in place.
"""

from __future__ import annotations

import hashlib
import json
import os
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from saltbench import __version__
from saltbench.chemistry.electrolyte import parse_formula
from saltbench.curation.bibliography import read_bibliography
from saltbench.curation.blocks import read_text
from saltbench.curation.electrode_readings import ElectrodeSet, electrode_kind, read_electrode_readings
from saltbench.curation.readings import STORE_COLUMN, MeasurementSet, read_readings
from saltbench.curation.reduction_methods import METHODS, Method
from saltbench.errors import InputFileError, UserError
from saltbench.store import electrode, queries
from saltbench.store.connection import Store
from saltbench.store.ingest import (
    IngestReport,
    _ensure_electrolyte,
    _upsert_source,
    expand_paths,
    file_kind,
    upsert_parent,
)

if TYPE_CHECKING:
    import pandas as pd

PROVIDER = "readings"


def parse_readings_files(paths: Sequence[str | os.PathLike[str]]
                         ) -> tuple[list, list[MeasurementSet | ElectrodeSet]]:
    """Bibliographies and readings files (or folders of them), all parsed and validated before
    any store access. Electrode and pH-buffer files (``kind: electrode``/``ph_buffers``) come
    back as :class:`ElectrodeSet`."""
    sources: list = []
    sets: list[MeasurementSet | ElectrodeSet] = []
    keys: dict[str, str] = {}
    for path in expand_paths(paths):
        text = read_text(path)
        kind = file_kind(path, text)
        if kind == "bibliography":
            sources.extend(read_bibliography(path))
        elif kind == "readings" and electrode_kind(text):
            es = read_electrode_readings(path, text=text)
            if es.key in keys:
                raise InputFileError(path, None, "id", f"set id {es.key!r} is also used by {keys[es.key]}")
            keys[es.key] = str(path)
            sets.append(es)
        elif kind == "readings":
            ms = read_readings(path, text=text)
            if ms.key in keys:
                raise InputFileError(path, None, "id", f"measurement set id {ms.key!r} is also used "
                                     f"by {keys[ms.key]}")
            keys[ms.key] = str(path)
            sets.append(ms)
        else:
            raise InputFileError(path, 1, None, f"a {kind} file is loaded with 'saltbench data add'; "
                                 "'readings add' takes raw-readings files (first line "
                                 "'# saltbench readings 1') and bibliographies")
    return sources, sets


def _check_references(store: Store, ms: MeasurementSet, known_sources: set[str]) -> None:
    if ms.source not in known_sources:
        raise InputFileError(ms.path, ms.source_line, "source", f"unknown citation key "
                             f"{ms.source!r}: add its entry (a paper, or your lab notebook page) to a "
                             "bibliography file in the same command")
    if ms.kind == "isopiestic":
        sid = str(ms.settings["reference_params"])
        row = store.conn.execute("SELECT model FROM parameter_sets WHERE set_id = ?", (sid,)).fetchone()
        if row is None:
            raise InputFileError(ms.path, None, "reference_params", f"no parameter set {sid!r} "
                                 "in the store")
        if row[0] != ms.settings["reference_model"]:
            raise InputFileError(ms.path, None, "reference_params", f"parameter set {sid!r} belongs "
                                 f"to model {row[0]}, not {ms.settings['reference_model']}")
        reference = parse_formula(str(ms.settings["reference"]))
        if reference.name not in _targets(store, sid):
            raise InputFileError(ms.path, None, "reference_params", f"parameter set {sid!r} has no "
                                 f"values for the reference {reference.name}")


def _targets(store: Store, set_id: str) -> set[str]:
    return {r[0] for r in store.conn.execute(
        "SELECT DISTINCT v.target FROM parameter_values v JOIN parameter_sets s ON s.id = v.set_pk "
        "WHERE s.set_id = ?", (set_id,))}


def _write_set(store: Store, ms: MeasurementSet, report: IngestReport) -> None:
    _ensure_electrolyte(store, ms.electrolyte, "user", bool(ms.declared_ions), ms.path)
    h = ms.content_hash()
    row = store.conn.execute("SELECT id, content_hash FROM measurement_sets WHERE key = ?",
                             (ms.key,)).fetchone()
    label = f"measurement set {ms.key}"
    if row is not None and row[1] == h:
        report.unchanged.append(label)
        return
    values = {
        "key": ms.key, "origin": "user", "electrolyte": ms.electrolyte.name, "kind": ms.kind,
        "temperature_k": ms.temperature_k, "source": ms.source, "typed": ms.typed,
        "from_memory": int(ms.from_memory), "method": ms.method, "method_version": ms.method_version,
        "settings": json.dumps(ms.settings, sort_keys=True), "note": ms.note, "file": ms.path,
        "content_hash": h, "n_readings": int(ms.reading.size),
    }
    pk = upsert_parent(store, "measurement_sets", row[0] if row else None, values, "readings", "set_id",
                       report, label)
    col = ms.store_column

    def num(x: float) -> float | None:
        return None if not np.isfinite(x) else float(x)

    bg = ms.background_molality
    store.db.table("readings").insert_all(
        {"set_id": pk, "seq": i, "molality": num(ms.molality[i]), "u_molality": num(ms.u_molality[i]),
         "activity": num(ms.activity[i]), col: float(ms.reading[i]),
         "u_reading": float(ms.u_reading[i]), "printed_unit": ms.printed_unit, "line": ms.lines[i],
         **({} if bg is None else {"background_molality": float(bg[i])}),
         **({} if ms.point_temperature is None else {"temperature_k": float(ms.point_temperature[i])})}
        for i in range(ms.reading.size))


def add_readings(store: Store, paths: Sequence[str | os.PathLike[str]]) -> IngestReport:
    """Load readings files (and bibliographies) in one transaction; store unchanged on error."""
    sources, sets = parse_readings_files(paths)
    report = IngestReport()
    with store.transaction():
        for s in sources:
            _upsert_source(store, s, "user", report)
        known = {r[0] for r in store.conn.execute("SELECT key FROM sources")}
        for ms in sets:
            if isinstance(ms, ElectrodeSet):
                electrode.check_source(ms, known)
                electrode.write_set(store, ms, report)
                continue
            _check_references(store, ms, known)
            _write_set(store, ms, report)
    return report


def load_set(store: Store, key: str) -> MeasurementSet:
    """A stored measurement set, back as a :class:`MeasurementSet` (readings in SI)."""
    row = store.conn.execute(
        "SELECT id, key, kind, electrolyte, temperature_k, source, typed, method, method_version, "
        "note, settings, file FROM measurement_sets WHERE key = ?", (key,)).fetchone()
    if row is None:
        known = ", ".join(all_keys(store))
        raise UserError(f"no measurement set {key!r} in the store; known: {known or 'none'}")
    (pk, key, kind, electrolyte, t, source, typed, method, version, note, settings, file) = row
    col = STORE_COLUMN[kind]
    rows = store.conn.execute(
        f"SELECT molality, u_molality, activity, {col}, u_reading, printed_unit, line, "
        "background_molality, temperature_k FROM readings WHERE set_id = ? ORDER BY seq", (pk,)).fetchall()
    arr = lambda i: np.array([np.nan if r[i] is None else r[i] for r in rows], dtype=float)
    e = queries.electrolyte(store, electrolyte)
    settings_doc = json.loads(settings)
    return MeasurementSet(key, file, kind, e, float(t), source, typed, method, version, note,
                          settings_doc, arr(0), arr(1), arr(2), arr(3), arr(4),
                          rows[0][5] if rows else "", [r[6] for r in rows],
                          background_molality=arr(7) if settings_doc.get("background") else None,
                          point_temperature=arr(8) if any(r[8] is not None for r in rows) else None)


def all_keys(store: Store) -> list[str]:
    """The keys of every stored measurement set, in order."""
    return [r[0] for r in store.conn.execute("SELECT key FROM measurement_sets ORDER BY key")]


def set_pk(store: Store, key: str) -> int:
    row = store.conn.execute("SELECT id FROM measurement_sets WHERE key = ?", (key,)).fetchone()
    if row is None:
        raise UserError(f"no measurement set {key!r} in the store")
    return int(row[0])


def list_sets(store: Store) -> pd.DataFrame:
    """One row per measurement set, with its reduction (if any) and whether it is current."""
    sql = """
    SELECT m.key, m.kind, m.electrolyte, m.temperature_k, m.n_readings, m.source, m.method,
           m.method_version, m.from_memory, m.file, m.content_hash,
           r.method AS reduced_with, r.method_version AS reduced_version, r.input_hash,
           COALESCE(d.key, x.key) AS dataset,
           (SELECT MIN(COALESCE(g.temperature_k, m.temperature_k)) FROM readings g
            WHERE g.set_id = m.id) AS t_min_k,
           (SELECT MAX(COALESCE(g.temperature_k, m.temperature_k)) FROM readings g
            WHERE g.set_id = m.id) AS t_max_k
    FROM measurement_sets m
    LEFT JOIN reductions r ON r.set_id = m.id
    LEFT JOIN datasets d ON d.id = r.dataset_id
    LEFT JOIN mixture_datasets x ON x.id = r.mixture_dataset_id
    ORDER BY m.electrolyte, m.kind, m.key
    """
    import pandas as pd

    frame = pd.DataFrame(list(store.db.query(sql)))
    if frame.empty:
        return frame
    status = []
    for r in frame.to_dict("records"):
        if r["reduced_with"] is None:
            status.append("not reduced")
        elif r["input_hash"] != r["content_hash"]:
            status.append("stale: readings changed")
        elif METHODS[r["reduced_with"]].version != r["reduced_version"]:
            status.append("stale: method updated")
        else:
            status.append("current")
    frame["status"] = status
    return frame


def reduced_dataset_key(ms: MeasurementSet, prop: str) -> str:
    return f"{ms.key}.{prop}"


def _typed_for_dataset(ms: MeasurementSet, method: Method) -> str:
    how = f"reduced by saltbench ({method.name} v{method.version}) from measurement set {ms.key}"
    if ms.typed.lower().startswith("measured"):
        return f"{ms.typed}; {how}"
    return f"measured readings {how}; the readings were {ms.typed}"


@dataclass(frozen=True)
class ReducedValues:
    """What the store keeps of a reduction (plain values; the reductions themselves live above,
    in :mod:`saltbench.measurements`): the method, the property it gives (None: no dataset),
    the values with their standard uncertainties, a note and JSON-able details."""

    method: Method
    property: str | None
    molality: np.ndarray
    value: np.ndarray
    u_value: np.ndarray
    note: str
    details: dict[str, object]
    # a mixture cell's reduction: the background salt's molality at each value (``molality`` is
    # the measured salt's, ``value`` ln gamma± of it); the result is a mixture dataset
    background_molality: np.ndarray | None = None
    # a reduction at several temperatures: each value's temperature in K (None: the set's)
    temperature_k: np.ndarray | None = None


def store_reduction(store: Store, ms: MeasurementSet, red: ReducedValues) -> str | None:
    """Write (or replace) the reduction of ``ms``; returns the reduced dataset's key, if any."""
    pk = set_pk(store, ms.key)
    h_in = store.conn.execute("SELECT content_hash FROM measurement_sets WHERE id = ?", (pk,)).fetchone()[0]
    result = json.dumps({"note": red.note, **red.details}, sort_keys=True, default=float)
    with store.transaction():
        prev = store.conn.execute("SELECT id, dataset_id, mixture_dataset_id FROM reductions "
                                  "WHERE set_id = ?", (pk,)).fetchone()
        dataset_id = mixture_id = None
        key = None
        if red.background_molality is not None:
            if prev and prev[1] is not None:
                store.conn.execute("DELETE FROM datasets WHERE id = ?", (prev[1],))
            key = reduced_dataset_key(ms, "ln_gamma_pm")
            mixture_id = _write_mixture_dataset(store, ms, red, key, prev[2] if prev else None)
        elif red.property is not None:
            if not ms.source:
                raise UserError(f"measurement set {ms.key} names no source; a reduced dataset must "
                                "cite one (e.g. your lab notebook entry in a bibliography)")
            key = reduced_dataset_key(ms, red.property)
            dataset_id = _write_dataset(store, ms, red, key, prev[1] if prev else None)
        elif prev and prev[1] is not None:
            store.conn.execute("DELETE FROM datasets WHERE id = ?", (prev[1],))
        if red.background_molality is None and prev and prev[2] is not None:
            store.conn.execute("DELETE FROM mixture_datasets WHERE id = ?", (prev[2],))
        values = {"set_id": pk, "dataset_id": dataset_id, "mixture_dataset_id": mixture_id,
                  "method": red.method.name,
                  "method_version": red.method.version, "input_hash": h_in,
                  "software_version": __version__, "result": result}
        # a dataset deleted above takes its reductions row with it (ON DELETE CASCADE)
        if prev is not None and store.conn.execute("SELECT 1 FROM reductions WHERE id = ?",
                                                   (prev[0],)).fetchone() is None:
            prev = None
        if prev is None:
            store.db.table("reductions").insert(values)
        else:
            store.db.table("reductions").update(prev[0], values)
    return key


def _write_dataset(store: Store, ms: MeasurementSet, red: ReducedValues, key: str,
                   previous_id: int | None) -> int:
    row = store.conn.execute("SELECT id FROM datasets WHERE origin = 'user' AND key = ?", (key,)).fetchone()
    if row is not None and row[0] != previous_id:
        raise UserError(f"a user dataset with id {key!r} already exists and was not reduced from "
                        f"measurement set {ms.key}; rename one of them")
    if previous_id is not None and (row is None or row[0] != previous_id):
        store.conn.execute("DELETE FROM datasets WHERE id = ?", (previous_id,))
        row = None
    temps = red.temperature_k
    t_all = np.full(red.molality.size, ms.temperature_k) if temps is None else temps
    order = np.lexsort((red.molality, np.round(t_all, 2)))
    m, v, u, t = red.molality[order], red.value[order], red.u_value[order], t_all[order]
    if np.any((np.diff(m) <= 0) & (np.diff(np.round(t, 2)) == 0)):
        raise UserError(f"measurement set {ms.key}: two readings share a molality; merge them "
                        "before reduction")
    if np.any(u <= 0) or np.any(~np.isfinite(v)):
        raise UserError(f"measurement set {ms.key}: the reduction gave a non-finite value or a zero "
                        "uncertainty; check the readings and their uncertainties")
    lines = [ms.lines[i] for i in order]
    doc: dict[str, object] = {"set": ms.key, "method": red.method.name, "version": red.method.version,
                              "points": [[float(a), float(b), float(c)] for a, b, c in zip(m, v, u)]}
    if temps is not None:  # only then: a reduction at one temperature hashes as before
        doc["point_temperature_k"] = [round(float(x), 6) for x in t]
    values = {
        "key": key, "origin": "user", "provider": PROVIDER, "electrolyte": ms.electrolyte.name,
        "property": red.property, "basis": "linear", "scale": "molality",
        "temperature_k": ms.temperature_k, "pressure_pa": 101325.0, "source": ms.source,
        "table_ref": f"reduced from measurement set {ms.key}", "precision": 1e-6,
        "uncertainty": None, "typed": _typed_for_dataset(ms, red.method), "from_memory": int(ms.from_memory),
        "note": f"reduction: {red.method.name} v{red.method.version} ({red.method.description}); {red.note}",
        "file": ms.path,
        "content_hash": hashlib.sha256(json.dumps(doc, sort_keys=True).encode()).hexdigest(),
        "n_points": int(m.size),
        "t_min_k": float(t.min()), "t_max_k": float(t.max()),
    }
    if row is None:
        pk = store.db.table("datasets").insert(values).last_pk
        assert pk is not None  # an insert into a table with an integer key always sets last_pk
        dataset_id = int(pk)
    else:
        dataset_id = int(row[0])
        store.conn.execute("DELETE FROM points WHERE dataset_id = ?", (dataset_id,))
        store.db.table("datasets").update(dataset_id, values)
    store.db.table("points").insert_all(
        {"dataset_id": dataset_id, "seq": i, "molality": float(m[i]), "value": float(v[i]),
         "value_printed": float(v[i]), "u_value": float(u[i]), "line": lines[i],
         "temperature_k": float(t[i])}
        for i in range(m.size))
    return dataset_id


def _write_mixture_dataset(store: Store, ms: MeasurementSet, red: ReducedValues, key: str,
                           previous_id: int | None) -> int:
    """The reduction of a mixture cell as a mixture dataset: property ln_gamma_pm of the measured
    salt in the system '<salt> + <background>', one point per reading, written as ingest writes
    a mixture file (the same checks), inside the caller's transaction."""
    from saltbench.chemistry.electrolyte import parse_formula as formula
    from saltbench.curation.mixtures import MixtureDataset, system_ions, system_name
    from saltbench.store.ingest import IngestReport
    from saltbench.store.mixtures import write_mixture

    assert red.background_molality is not None
    if not ms.source:
        raise UserError(f"measurement set {ms.key} names no source; a reduced dataset must cite one")
    if np.any(red.u_value <= 0) or np.any(~np.isfinite(red.value)):
        raise UserError(f"measurement set {ms.key}: the reduction gave a non-finite value or a zero "
                        "uncertainty; check the readings and their uncertainties")
    row = store.conn.execute("SELECT id FROM mixture_datasets WHERE origin = 'user' AND key = ?",
                             (key,)).fetchone()
    if row is not None and row[0] != previous_id:
        raise UserError(f"a user mixture dataset with id {key!r} already exists and was not reduced "
                        f"from measurement set {ms.key}; rename one of them")
    known_ions = {**ms.declared_ions, ms.electrolyte.cation.formula: ms.electrolyte.cation,
                  ms.electrolyte.anion.formula: ms.electrolyte.anion}
    background = formula(str(ms.settings["background"]), known_ions)
    salts = (ms.electrolyte, background)
    ions = system_ions(salts)
    amounts = np.column_stack([red.molality, red.background_molality])
    molality = np.zeros((amounts.shape[0], len(ions)))
    for j, salt in enumerate(salts):
        for ion, nu in ((salt.cation, salt.nu_cation), (salt.anion, salt.nu_anion)):
            molality[:, [i.formula for i in ions].index(ion.formula)] += nu * amounts[:, j]
    value = np.asarray(red.value, dtype=float)
    u = np.asarray(red.u_value, dtype=float)
    md = MixtureDataset(
        key=key, path=ms.path, system=system_name(salts), salts=salts, property="ln_gamma_pm",
        salt=ms.electrolyte.name, temperature_k=ms.temperature_k, source=str(ms.source),
        source_line=ms.source_line or 0, table=f"reduced from measurement set {ms.key}",
        uncertainty=None, typed=_typed_for_dataset(ms, red.method),
        note=f"reduction: {red.method.name} v{red.method.version} ({red.method.description}); {red.note}",
        columns=(ms.electrolyte.name, background.name), amounts=amounts, ions=ions,
        molality=molality, value_printed=value, u_printed=u, value=value, u_value=u,
        lines=list(ms.lines))
    known = {r[0] for r in store.conn.execute("SELECT key FROM sources")}
    write_mixture(store, md, "user", PROVIDER, known, IngestReport())
    got = store.conn.execute("SELECT id FROM mixture_datasets WHERE origin = 'user' AND key = ?",
                             (key,)).fetchone()
    return int(got[0])


def reduction_of(store: Store, key: str) -> dict | None:
    """The stored reduction of set ``key``: method, version, dataset key and result details."""
    row = store.conn.execute(
        "SELECT r.method, r.method_version, r.input_hash, r.software_version, r.result, "
        "COALESCE(d.key, x.key), m.content_hash FROM reductions r "
        "JOIN measurement_sets m ON m.id = r.set_id LEFT JOIN datasets d ON d.id = r.dataset_id "
        "LEFT JOIN mixture_datasets x ON x.id = r.mixture_dataset_id WHERE m.key = ?",
        (key,)).fetchone()
    if row is None:
        return None
    return {"method": row[0], "method_version": row[1], "software_version": row[3],
            "result": json.loads(row[4]), "dataset": row[5], "current": row[2] == row[6]
            and METHODS[row[0]].version == row[1]}
