"""Parameter sets in the store: published ones (from files) and fitted ones (from `fit`).

The store does not import the model contract: a model is anything with an ``id`` and
``parameters`` (each with ``name``, ``scope`` and ``ion_key``), described by :class:`ModelKeys`.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Protocol

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import UserError
from saltbench.store.connection import Store


class ParameterKey(Protocol):
    """How a stored value is found for one parameter of a model."""

    @property
    def name(self) -> str: ...
    @property
    def scope(self) -> str: ...  # "electrolyte", "cation" or "anion"
    @property
    def ion_key(self) -> str | None: ...


class ModelKeys(Protocol):
    """What the store needs of a model: its id and its parameters' keys."""

    @property
    def id(self) -> str: ...
    @property
    def parameters(self) -> Sequence[ParameterKey]: ...


@dataclass
class ResolvedParameters:
    """Values for one model and electrolyte, with where they came from."""

    set_id: str
    kind: str  # "published", "fitted" or "defaults"
    values: dict[str, float]
    a_phi: float | None = None
    m_max: float | None = None
    source: str | None = None
    citation: str = ""
    from_memory: bool = False
    stderr: dict[str, float] = field(default_factory=dict)
    covariance: tuple[list[str], list[list[float]]] | None = None
    temperature_k: float = 298.15
    #: lowest molality of the data a fitted set was fitted to (a published set reaches m -> 0)
    m_min: float | None = None


def resolve(store: Store, model: ModelKeys, electrolyte: Electrolyte, set_row: tuple) -> ResolvedParameters | None:
    pk, set_id, kind, source, a_phi, from_memory, temperature_k = set_row
    rows = store.conn.execute("SELECT target, target_kind, name, value, stderr, m_max FROM parameter_values "
                              "WHERE set_pk = ?", (pk,)).fetchall()
    values: dict[str, float] = {}
    stderr: dict[str, float] = {}
    m_max = None
    found = False
    by_target: dict[tuple[str, str], dict[str, tuple[float, float | None, float | None]]] = {}
    for target, tkind, name, value, se, mm in rows:
        by_target.setdefault((tkind, target), {})[name] = (value, se, mm)
    elec = by_target.get(("electrolyte", electrolyte.name), {})
    for p in model.parameters:
        if p.scope == "electrolyte" and p.name in elec:
            v, se, mm = elec[p.name]
            values[p.name] = v
            if se is not None:
                stderr[p.name] = se
            m_max = mm if mm is not None else m_max
            found = True
        elif p.scope in ("cation", "anion"):
            ion = electrolyte.cation if p.scope == "cation" else electrolyte.anion
            for t in (ion.formula, ion.name):
                entry = by_target.get(("ion", t), {})
                if p.ion_key in entry:
                    values[p.name] = entry[p.ion_key][0]
                    found = True
                    break
    # values of a fitted set are stored under the model's own parameter names
    if kind == "fitted" and elec:
        for name, (v, se, _) in elec.items():
            values.setdefault(name, v)
            if se is not None:
                stderr.setdefault(name, se)
            found = True
    if not found:
        return None
    citation = ""
    if source:
        row = store.conn.execute("SELECT citation FROM sources WHERE key = ?", (source,)).fetchone()
        citation = row[0] if row else ""
    cov = store.conn.execute("SELECT names, matrix FROM parameter_covariances WHERE set_pk = ?", (pk,)).fetchone()
    covariance = (json.loads(cov[0]), json.loads(cov[1])) if cov else None
    m_min = None
    if kind == "fitted":
        settings = store.conn.execute("SELECT settings FROM parameter_sets WHERE id = ?", (pk,)).fetchone()
        m_min = json.loads(settings[0] or "{}").get("molality_min") if settings else None
    return ResolvedParameters(set_id, kind, values, a_phi, m_max, source, citation, bool(from_memory),
                              stderr, covariance, temperature_k, m_min)


_SET_COLUMNS = "id, set_id, kind, source, a_phi, from_memory, temperature_k"


def published(store: Store, model: ModelKeys, electrolyte: Electrolyte) -> list[ResolvedParameters]:
    rows = store.conn.execute(f"SELECT {_SET_COLUMNS} FROM parameter_sets WHERE model = ? AND kind = 'published' "
                              "ORDER BY set_id", (model.id,)).fetchall()
    out = [resolve(store, model, electrolyte, r) for r in rows]
    return [r for r in out if r is not None]


def by_id(store: Store, model: ModelKeys, electrolyte: Electrolyte, set_id: str) -> ResolvedParameters:
    row = store.conn.execute(f"SELECT {_SET_COLUMNS}, model FROM parameter_sets WHERE set_id = ?", (set_id,)).fetchone()
    if row is None:
        known = ", ".join(r[0] for r in store.conn.execute(
            "SELECT set_id FROM parameter_sets WHERE model = ? ORDER BY set_id", (model.id,)))
        raise UserError(f"no parameter set {set_id!r} in the store; sets for model {model.id}: {known or 'none'}")
    if row[-1] != model.id:
        raise UserError(f"parameter set {set_id!r} belongs to model {row[-1]}, not {model.id}")
    resolved = resolve(store, model, electrolyte, row[:-1])
    if resolved is None:
        raise UserError(f"parameter set {set_id!r} has no values for {electrolyte.name}")
    return resolved


def list_sets(store: Store):
    import pandas as pd

    return pd.DataFrame(list(store.db.query(
        "SELECT s.set_id, s.kind, s.model, s.source, s.table_ref, s.a_phi, s.from_memory, s.origin, "
        "COUNT(DISTINCT v.target) AS n_targets, GROUP_CONCAT(DISTINCT v.target) AS targets "
        "FROM parameter_sets s LEFT JOIN parameter_values v ON v.set_pk = s.id "
        "GROUP BY s.id ORDER BY s.model, s.set_id")))


def load_set(store: Store, set_id: str) -> dict | None:
    """Everything stored about one parameter set: its header, values (per target) and source."""
    row = store.conn.execute(
        "SELECT id, set_id, kind, model, source, table_ref, temperature_k, a_phi, typed, note, settings, "
        "data_hashes, software_version FROM parameter_sets WHERE set_id = ?", (set_id,)).fetchone()
    if row is None:
        return None
    keys = ["pk", "set_id", "kind", "model", "source", "table_ref", "temperature_k", "a_phi", "typed", "note",
            "settings", "data_hashes", "software_version"]
    doc = dict(zip(keys, row))
    doc["settings"] = json.loads(doc["settings"] or "{}")
    doc["data_hashes"] = json.loads(doc["data_hashes"] or "[]")
    doc["values"] = [dict(zip(["target", "target_kind", "name", "value", "stderr", "m_max"], v))
                     for v in store.conn.execute(
                         "SELECT target, target_kind, name, value, stderr, m_max FROM parameter_values "
                         "WHERE set_pk = ? ORDER BY target, name", (doc.pop("pk"),))]
    doc["source_entry"] = None
    if doc["source"]:
        src = store.conn.execute("SELECT * FROM sources WHERE key = ?", (doc["source"],)).fetchone()
        if src is not None:
            cols = [d[0] for d in store.conn.execute("SELECT * FROM sources LIMIT 0").description]
            doc["source_entry"] = dict(zip(cols, src))
            doc["citation"] = doc["source_entry"]["citation"]
    return doc


def ion_values(store: Store, set_id: str, name: str) -> dict[str, float]:
    """The per-ion values ``name`` of set ``set_id``, by ion (empty if the set holds none)."""
    return {t: float(v) for t, v in store.conn.execute(
        "SELECT v.target, v.value FROM parameter_values v JOIN parameter_sets s ON s.id = v.set_pk "
        "WHERE s.set_id = ? AND v.target_kind = 'ion' AND v.name = ?", (set_id, name))}


def electrolyte_values(store: Store, set_id: str, name: str) -> dict[str, float]:
    """The per-electrolyte values ``name`` of set ``set_id``, by electrolyte (empty if none)."""
    return {t: float(v) for t, v in store.conn.execute(
        "SELECT v.target, v.value FROM parameter_values v JOIN parameter_sets s ON s.id = v.set_pk "
        "WHERE s.set_id = ? AND v.target_kind = 'electrolyte' AND v.name = ?", (set_id, name))}


def typed_from_memory(store: Store, set_id: str) -> bool:
    """Whether set ``set_id`` was typed from memory (False for a set the store does not hold)."""
    row = store.conn.execute("SELECT from_memory FROM parameter_sets WHERE set_id = ?", (set_id,)).fetchone()
    return bool(row and row[0])
