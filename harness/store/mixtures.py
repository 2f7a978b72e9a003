"""Mixture datasets in the store (migration 0005): writing them inside ingest's transaction,
removing them, and reading them back as typed rows and as :class:`MixturePoints`.

Tables: ``mixture_datasets`` (one row per file: system, salts and amount columns as JSON lists,
property, citation, how typed, content hash), ``mixture_points`` (the amounts as the file gave
them, the value printed and in the fit basis, uncertainties, ionic strength, file line) and
``mixture_point_ions`` (each point's molality of every ion of the system, resolved from the
amounts; ions reference the ``ions`` table).
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.chemistry.ions import Ion
from saltbench.chemistry.solution import Composition
from saltbench.curation.mixture_checks import MixturePointRecord
from saltbench.curation.mixture_points import MixturePoints
from saltbench.curation.mixtures import MixtureDataset, same_system
from saltbench.errors import InputFileError, UserError
from saltbench.store.connection import Store
from saltbench.store.ingest import IngestReport, _ensure_ion, upsert_parent


@dataclass(frozen=True)
class MixtureDatasetRow:
    """One stored mixture dataset, with its citation and the range of its points."""

    key: str
    origin: str
    system: str
    salts: tuple[str, ...]
    columns: tuple[str, ...]
    property: str  # as printed: gamma_pm, ln_gamma_pm, osmotic, water_activity
    salt: str | None
    quantity: tuple[str, str]  # what MixturePoints.values are: ('ln_gamma_pm', 'HCl'), ('osmotic', '')
    temperature_k: float
    source: str
    citation: str
    doi: str | None
    table_ref: str
    uncertainty: float | None
    typed: str
    from_memory: bool
    invented: bool
    note: str
    file: str
    content_hash: str
    n_points: int
    min_ionic_strength: float
    max_ionic_strength: float

    def as_dict(self) -> dict:
        return {k: (list(v) if isinstance(v, tuple) else v) for k, v in self.__dict__.items()}


def _quantity(prop: str, salt: str | None) -> tuple[str, str]:
    if prop in ("gamma_pm", "ln_gamma_pm"):
        return ("ln_gamma_pm", salt or "")
    return (prop, "")


# -- writing --------------------------------------------------------------------------------
def _same_points(store: Store, md: MixtureDataset) -> tuple[str, str] | None:
    """(origin, key) of a stored mixture dataset of the same system, property and temperature
    whose points are these, value for value; None when there is none."""
    candidates = store.conn.execute(
        "SELECT id, origin, key, system FROM mixture_datasets WHERE property = ? AND n_points = ? "
        "AND abs(temperature_k - ?) < 0.01 AND salt IS ?",
        (md.property, len(md.lines), md.temperature_k, md.salt)).fetchall()
    names = [i.formula for i in md.ions]
    mine = sorted((tuple(np.round(m, 12).tolist()), float(v)) for m, v in zip(md.molality, md.value_printed))
    for pk, origin, key, system in candidates:
        if not same_system(system, md.system):
            continue
        theirs = _stored_molality(store, pk, names)
        values = [r[0] for r in store.conn.execute(
            "SELECT value_printed FROM mixture_points WHERE dataset_id = ? ORDER BY seq", (pk,))]
        if theirs is None:
            continue
        other = sorted((tuple(np.round(m, 12).tolist()), float(v)) for m, v in zip(theirs, values))
        if other == mine:
            return origin, key
    return None


def _stored_molality(store: Store, pk: int, names: list[str]) -> np.ndarray | None:
    rows = store.conn.execute("SELECT seq, ion, molality FROM mixture_point_ions WHERE dataset_id = ? "
                              "ORDER BY seq, position", (pk,)).fetchall()
    by_seq: dict[int, dict[str, float]] = {}
    for seq, ion, m in rows:
        by_seq.setdefault(seq, {})[ion] = m
    if any(set(d) != set(names) for d in by_seq.values()):
        return None
    return np.array([[by_seq[s][n] for n in names] for s in sorted(by_seq)])


def write_mixture(store: Store, md: MixtureDataset, origin: str, provider: str, known_sources: set[str],
                  report: IngestReport) -> None:
    """Write one mixture dataset inside ingest's transaction, the way ingest writes a one-salt
    dataset (ions ensured, the row upserted on (origin, key), points replaced)."""
    if md.source not in known_sources:
        raise InputFileError(md.path, md.source_line, "source", f"unknown citation key {md.source!r}: "
                             "add its entry to a bibliography file in the same command")
    clash = store.conn.execute("SELECT origin FROM datasets WHERE key = ?", (md.key,)).fetchone()
    if clash is not None:
        raise InputFileError(md.path, None, "id", f"dataset id {md.key!r} is already used by a one-salt "
                             f"dataset ({clash[0]}); choose another id")
    for ion in md.ions:
        _ensure_ion(store, ion, origin, md.path)
    h = md.content_hash()
    row = store.conn.execute("SELECT id, content_hash FROM mixture_datasets WHERE origin = ? AND key = ?",
                             (origin, md.key)).fetchone()
    label = f"mixture dataset {md.key}"
    if row is not None and row[1] == h:
        report.unchanged.append(label)
        return
    twin = _same_points(store, md)
    if twin is not None and twin != (origin, md.key):
        # a second copy would be counted twice by any fit to the family
        raise InputFileError(md.path, md.lines[0], None, f"the same points as mixture dataset {twin[1]} "
                             f"already in the store ({twin[0]}); not added twice")
    comp = md.composition()
    values = {
        "key": md.key, "origin": origin, "provider": provider, "system": md.system,
        "salts": json.dumps([s.name for s in md.salts]), "columns": json.dumps(list(md.columns)),
        "property": md.property, "salt": md.salt, "temperature_k": md.temperature_k,
        "source": md.source, "table_ref": md.table, "uncertainty": md.uncertainty, "typed": md.typed,
        "from_memory": int(md.from_memory), "invented": int(md.invented), "note": md.note,
        "file": Path(md.path).name if origin == "bundled" else md.path, "content_hash": h,
        "n_points": len(md.lines),
    }
    pk = upsert_parent(store, "mixture_datasets", row[0] if row else None, values, "mixture_points",
                       "dataset_id", report, label)
    store.db.table("mixture_points").insert_all(
        {"dataset_id": pk, "seq": i, "amounts": json.dumps([float(x) for x in a]),
         "ionic_strength": float(ist), "value": float(v), "value_printed": float(vp),
         "u_value": float(u), "u_printed": float(up), "line": int(n)}
        for i, (a, ist, v, vp, u, up, n) in enumerate(zip(md.amounts, comp.ionic_strength, md.value,
                                                          md.value_printed, md.u_value, md.u_printed,
                                                          md.lines)))
    store.db.table("mixture_point_ions").insert_all(
        {"dataset_id": pk, "seq": i, "position": k, "ion": ion.formula, "molality": float(m[k])}
        for i, m in enumerate(md.molality) for k, ion in enumerate(md.ions))


def remove_bundled_mixtures(store: Store, keep: set[str], report: IngestReport) -> None:
    """Bundled (and plugin) mixture datasets no longer among the bundle's files go."""
    for pk, key in store.conn.execute("SELECT id, key FROM mixture_datasets WHERE origin = 'bundled'").fetchall():
        if key not in keep:
            store.conn.execute("DELETE FROM mixture_datasets WHERE id = ?", (pk,))
            report.removed.append(f"mixture dataset {key}")


def remove_mixture(store: Store, key: str, *, force: bool = False) -> list[str] | None:
    """Delete the user mixture dataset ``key`` (its points with it) in one transaction; None when
    the store holds no mixture dataset of that key. Refuses, changing nothing, when a fitted
    parameter set records its content hash among its data, unless ``force`` (then it goes too)."""
    row = store.conn.execute("SELECT id, origin, content_hash FROM mixture_datasets WHERE key = ? "
                             "ORDER BY origin = 'user' DESC", (key,)).fetchone()
    if row is None:
        return None
    pk, origin, h = row
    if origin != "user":
        raise UserError(f"mixture dataset {key} is bundled with saltbench; only your own datasets can be removed")
    fitted = [sid for sid, hashes in store.conn.execute(
        "SELECT set_id, data_hashes FROM parameter_sets WHERE kind = 'fitted'") if h in json.loads(hashes or "[]")]
    if fitted and not force:
        raise UserError(f"mixture dataset {key} is used by "
                        f"{', '.join(f'parameter set {s}' for s in fitted)}; remove those first, or use "
                        "--force to remove them with it")
    removed = [f"mixture dataset {key}"]
    with store.transaction():
        for sid in fitted:
            store.conn.execute("DELETE FROM parameter_sets WHERE set_id = ?", (sid,))
            removed.append(f"parameter set {sid}")
        store.conn.execute("DELETE FROM mixture_datasets WHERE id = ?", (pk,))
    return removed


# -- reading --------------------------------------------------------------------------------
_ROW_SQL = """
SELECT d.id, d.key, d.origin, d.system, d.salts, d.columns, d.property, d.salt, d.temperature_k,
       d.source, s.citation, s.doi, d.table_ref, d.uncertainty, d.typed, d.from_memory, d.invented,
       d.note, d.file, d.content_hash, d.n_points,
       (SELECT MIN(ionic_strength) FROM mixture_points p WHERE p.dataset_id = d.id) AS i_min,
       (SELECT MAX(ionic_strength) FROM mixture_points p WHERE p.dataset_id = d.id) AS i_max
FROM mixture_datasets d JOIN sources s ON s.key = d.source
ORDER BY d.system, d.property, d.salt, d.source, d.key, d.origin
"""


def _typed_rows(store: Store) -> list[tuple[int, MixtureDatasetRow]]:
    out = []
    for r in store.conn.execute(_ROW_SQL).fetchall():
        out.append((int(r[0]), MixtureDatasetRow(
            key=r[1], origin=r[2], system=r[3], salts=tuple(json.loads(r[4])), columns=tuple(json.loads(r[5])),
            property=r[6], salt=r[7], quantity=_quantity(r[6], r[7]), temperature_k=float(r[8]), source=r[9],
            citation=r[10], doi=r[11], table_ref=r[12], uncertainty=r[13], typed=r[14],
            from_memory=bool(r[15]), invented=bool(r[16]), note=r[17], file=r[18], content_hash=r[19],
            n_points=int(r[20]), min_ionic_strength=float(r[21]), max_ionic_strength=float(r[22]))))
    return out


def mixture_dataset_rows(store: Store, system: str | None = None) -> list[MixtureDatasetRow]:
    """The stored mixture datasets (of ``system``: the same salts in any order), as typed rows."""
    rows = [row for _, row in _typed_rows(store)]
    if system is None:
        return rows
    return [r for r in rows if same_system(r.system, system) or r.system == system]


def _matching(store: Store, key_or_system: str) -> list[tuple[int, MixtureDatasetRow]]:
    rows = _typed_rows(store)
    by_key = [(pk, r) for pk, r in rows if r.key == key_or_system]
    if by_key:
        return by_key[:1] if len(by_key) == 1 else [next((x for x in by_key if x[1].origin == "user"), by_key[0])]
    return [(pk, r) for pk, r in rows if r.system == key_or_system or same_system(r.system, key_or_system)]


def has_mixture(store: Store, key_or_system: str) -> bool:
    """Whether ``key_or_system`` names a stored mixture dataset or system."""
    return bool(_matching(store, key_or_system))


def _ions(store: Store, formulas: list[str]) -> dict[str, Ion]:
    out = {}
    for f in formulas:
        row = store.conn.execute("SELECT formula, charge, molar_mass FROM ions WHERE formula = ?", (f,)).fetchone()
        out[f] = Ion(row[0], int(row[1]), float(row[2]))
    return out


def _points_of(store: Store, pk: int, row: MixtureDatasetRow) -> MixturePoints:
    ion_rows = store.conn.execute(
        "SELECT DISTINCT position, ion FROM mixture_point_ions WHERE dataset_id = ? ORDER BY position",
        (pk,)).fetchall()
    formulas = [ion for _, ion in ion_rows]
    ions = _ions(store, formulas)
    salts = tuple(parse_formula(s, ions) for s in row.salts)
    pts = store.conn.execute("SELECT value, u_value, line FROM mixture_points WHERE dataset_id = ? "
                             "ORDER BY seq", (pk,)).fetchall()
    n, k = len(pts), len(formulas)
    molality = np.zeros((n, k))
    for seq, position, m in store.conn.execute(
            "SELECT seq, position, molality FROM mixture_point_ions WHERE dataset_id = ?", (pk,)):
        molality[seq, position] = m
    comp = Composition(tuple(ions[f] for f in formulas), molality, np.full(n, row.temperature_k), None, salts)
    return MixturePoints(
        key=row.key, system=row.system, composition=comp, quantity=row.quantity,
        values=np.array([p[0] for p in pts], dtype=float), uncertainties=np.array([p[1] for p in pts], dtype=float),
        ionic_strength=comp.ionic_strength.copy(), temperature_k=row.temperature_k, source=row.source,
        content_hash=row.content_hash, origin=row.origin, typed=row.typed,
        lines=tuple(int(p[2]) for p in pts), file=row.file)


def mixture_points(store: Store, key_or_system: str) -> list[MixturePoints]:
    """The points of the mixture dataset ``key_or_system`` (a key: one dataset, the user's where a
    bundled one has the same key), or of every dataset of that system (the same salts in any
    order), ready for fitting. Raises UserError when there is none."""
    found = _matching(store, key_or_system)
    if not found:
        known = sorted({r.system for _, r in _typed_rows(store)})
        raise UserError(f"no mixture dataset or system {key_or_system!r} in the store; known systems: "
                        f"{', '.join(known) or 'none'}")
    return [_points_of(store, pk, row) for pk, row in found]


def mixture_point_rows(store: Store, key_or_system: str | None = None) -> list[MixturePointRecord]:
    """Every stored mixture point (of one dataset or system), as the file printed it, with its
    resolved composition."""
    out = []
    for pk, row in _typed_rows(store) if key_or_system is None else _matching(store, key_or_system):
        pts = _points_of(store, pk, row)
        printed = store.conn.execute("SELECT value_printed, u_printed, line FROM mixture_points "
                                     "WHERE dataset_id = ? ORDER BY seq", (pk,)).fetchall()
        names = pts.composition.names
        for i, (vp, up, line) in enumerate(printed):
            out.append(MixturePointRecord(row.key, row.system, row.property, row.salt, row.temperature_k, names,
                                          tuple(float(x) for x in pts.composition.molality[i]),
                                          float(pts.ionic_strength[i]), float(vp), float(up), line, row.file))
    return out
