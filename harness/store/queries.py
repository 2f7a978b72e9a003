"""Read-only queries returning rows (plain dicts) or, for the API's tables, pandas DataFrames,
plus the store's content hash. pandas is imported only where a DataFrame is made, so that a
command that needs none (a comparison) does not pay for it."""

from __future__ import annotations

import hashlib
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    import pandas as pd

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.ions import Ion
from saltbench.errors import UserError
from saltbench.store.connection import Store

CONTENT_TABLES = ("sources", "ions", "electrolytes", "datasets", "points", "parameter_sets",
                  "parameter_values", "parameter_covariances", "measurement_sets", "readings",
                  "reductions", "mixture_datasets", "mixture_points", "mixture_point_ions")


Row = dict[str, Any]


def _rows(store: Store, sql: str, params: tuple = ()) -> list[Row]:
    return list(store.db.query(sql, params))


def _frame(rows: list[Row]) -> pd.DataFrame:
    import pandas as pd

    return pd.DataFrame(rows)


def electrolytes(store: Store) -> pd.DataFrame:
    sql = """
    SELECT e.name AS electrolyte, e.charge_type, e.cation, e.anion, e.nu_cation, e.nu_anion,
           e.molar_mass, e.origin,
           COUNT(d.id) AS n_datasets,
           COALESCE(SUM(d.n_points), 0) AS n_points,
           GROUP_CONCAT(DISTINCT d.property) AS properties,
           GROUP_CONCAT(DISTINCT d.source) AS sources,
           MAX(CASE WHEN d.property <> 'water_activity'
                    THEN (SELECT MAX(molality) FROM points p WHERE p.dataset_id = d.id) END) AS max_molality,
           MAX(d.from_memory) AS any_from_memory
    FROM electrolytes e JOIN datasets d ON d.electrolyte = e.name
    GROUP BY e.name ORDER BY e.charge_type, e.name
    """
    return _frame(_rows(store, sql))


def electrolyte_names(store: Store) -> list[str]:
    """The names :func:`electrolytes` lists, in its order, without building a DataFrame (a
    command that only iterates over them need not import pandas)."""
    sql = """
    SELECT e.name FROM electrolytes e JOIN datasets d ON d.electrolyte = e.name
    GROUP BY e.name ORDER BY e.charge_type, e.name
    """
    return [r["name"] for r in _rows(store, sql)]


def datasets(store: Store, electrolyte: str | None = None) -> pd.DataFrame:
    return _frame(dataset_rows(store, electrolyte))


def dataset_rows(store: Store, electrolyte: str | None = None) -> list[Row]:
    """The stored datasets (of ``electrolyte``) with their source's citation, as rows."""
    sql = """
    SELECT d.id, d.key, d.origin, d.electrolyte, d.property, d.basis, d.scale, d.temperature_k,
           d.pressure_pa, d.source, s.citation, s.doi, d.table_ref, d.precision, d.uncertainty,
           d.typed, d.from_memory, d.note, d.file, d.content_hash, d.n_points,
           COALESCE(d.t_min_k, d.temperature_k) AS t_min_k, COALESCE(d.t_max_k, d.temperature_k) AS t_max_k,
           d.unit,
           (SELECT MIN(molality) FROM points p WHERE p.dataset_id = d.id) AS min_molality,
           (SELECT MAX(molality) FROM points p WHERE p.dataset_id = d.id) AS max_molality
    FROM datasets d JOIN sources s ON s.key = d.source
    """
    params: tuple = ()
    if electrolyte:
        sql += " WHERE d.electrolyte = ?"
        params = (electrolyte,)
    sql += " ORDER BY d.electrolyte, d.property, d.source, d.key"
    return _rows(store, sql, params)


def points(store: Store, electrolyte: str | None = None, dataset_ids: list[int] | None = None) -> pd.DataFrame:
    return _frame(point_rows(store, electrolyte, dataset_ids))


def point_rows(store: Store, electrolyte: str | None = None,
               dataset_ids: list[int] | None = None) -> list[Row]:
    """The stored points (of ``electrolyte``, of ``dataset_ids``) with their dataset's fields;
    ``temperature_k`` is each point's own (issue 21), the dataset's where the point has none."""
    sql = """
    SELECT d.electrolyte, d.property, p.molality, p.value, p.u_value AS uncertainty,
           COALESCE(p.temperature_k, d.temperature_k) AS temperature_k, d.source, d.key AS dataset,
           d.id AS dataset_id, d.origin,
           p.value_printed, d.basis, p.line, d.file, COALESCE(p.precision, d.precision) AS precision
    FROM points p JOIN datasets d ON d.id = p.dataset_id
    """
    where: list[str] = []
    params: list[object] = []
    if electrolyte:
        where.append("d.electrolyte = ?")
        params.append(electrolyte)
    if dataset_ids is not None:
        where.append(f"d.id IN ({','.join('?' * len(dataset_ids)) or 'NULL'})")
        params.extend(dataset_ids)
    if where:
        sql += " WHERE " + " AND ".join(where)
    sql += (" ORDER BY d.electrolyte, d.property, d.source, d.key, "
            "COALESCE(p.temperature_k, d.temperature_k), p.molality")
    return _rows(store, sql, tuple(params))


def temperatures(store: Store, electrolyte: str | None = None) -> list[float]:
    """The temperatures (K, coldest first) at which the points (of ``electrolyte``) lie, points
    within ``SAME_TEMPERATURE_K`` of each other taken as one."""
    import numpy as np

    from saltbench.curation.temperatures import distinct_temperatures

    sql = ("SELECT DISTINCT round(COALESCE(p.temperature_k, d.temperature_k), 3) FROM points p "
           "JOIN datasets d ON d.id = p.dataset_id")
    rows = store.conn.execute(sql + (" WHERE d.electrolyte = ?" if electrolyte else ""),
                              (electrolyte,) if electrolyte else ()).fetchall()
    return [round(t, 3) for t in distinct_temperatures(np.array([r[0] for r in rows], dtype=float))]


def sources(store: Store) -> pd.DataFrame:
    return _frame(_rows(store, "SELECT * FROM sources ORDER BY key"))


def electrolyte(store: Store, name: str) -> Electrolyte:
    """The stored electrolyte ``name`` (case-insensitive match on its formula)."""
    row = store.conn.execute(
        "SELECT name, cation, anion, nu_cation, nu_anion FROM electrolytes WHERE name = ? COLLATE NOCASE",
        (name,)).fetchone()
    if row is None:
        known = ", ".join(r[0] for r in store.conn.execute(
            "SELECT DISTINCT electrolyte FROM datasets ORDER BY electrolyte"))
        hint = (" (a comma is no part of a formula; where a command takes several electrolytes, "
                "separate them with spaces)") if "," in name else ""
        raise UserError(f"no data for electrolyte {name!r} in the store{hint}; known: {known or 'none'}")
    ions = {}
    for formula in (row[1], row[2]):
        f, z, mm = store.conn.execute("SELECT formula, charge, molar_mass FROM ions WHERE formula = ?",
                                      (formula,)).fetchone()
        ions[f] = Ion(f, int(z), float(mm))
    return Electrolyte(row[0], ions[row[1]], ions[row[2]], int(row[3]), int(row[4]))


def content_hash(store: Store) -> str:
    """SHA-256 over every content row of every table, in a fixed order (not layout or pages)."""
    h = hashlib.sha256()
    h.update(str(store.schema_version()).encode())
    for table in CONTENT_TABLES:
        if not store.db[table].exists():
            continue
        cols = [c.name for c in store.db[table].columns]
        h.update(table.encode())
        for row in store.conn.execute(f"SELECT {', '.join(cols)} FROM {table} ORDER BY {', '.join(cols)}"):
            h.update(repr(tuple(row)).encode())
    return h.hexdigest()
