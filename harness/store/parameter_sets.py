"""Parameter sets in the store: published ones (from files) and fitted ones (from `fit`).

The store does not import the model contract: a model is anything with an ``id`` and
``parameters`` (each with ``name``, ``scope`` and ``ion_key``), described by :class:`ModelKeys`.
"""

from __future__ import annotations

import json
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any, Generic, Protocol, TypeVar

from saltbench.chemistry.electrolyte import Electrolyte, parse_formula
from saltbench.chemistry.ions import KNOWN_IONS
from saltbench.curation.parameters import ion_group
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
    #: the set's temperature form (None: values at ``temperature_k`` only), the range its authors
    #: fitted it over (K), and each parameter's further coefficients (``values`` holds the first)
    temperature_form: str | None = None
    temperature_range_k: tuple[float, float] | None = None
    coefficients: dict[str, dict[str, float]] = field(default_factory=dict)


def _coefficients(store: Store, pk: int) -> dict[tuple[str, str], dict[str, float]]:
    """A set's further temperature coefficients by (target, parameter)."""
    out: dict[tuple[str, str], dict[str, float]] = {}
    for target, name, coefficient, value in store.conn.execute(
            "SELECT target, name, coefficient, value FROM parameter_coefficients WHERE set_pk = ?", (pk,)):
        out.setdefault((target, name), {})[coefficient] = float(value)
    return out


def resolve(store: Store, model: ModelKeys, electrolyte: Electrolyte, set_row: tuple) -> ResolvedParameters | None:
    pk, set_id, kind, source, a_phi, from_memory, temperature_k, form, t_min, t_max = set_row
    by_coefficient = _coefficients(store, pk) if form is not None else {}
    coefficients: dict[str, dict[str, float]] = {}
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
            if (electrolyte.name, p.name) in by_coefficient:
                coefficients[p.name] = by_coefficient[(electrolyte.name, p.name)]
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
                    if (t, p.ion_key) in by_coefficient:
                        coefficients[p.name] = by_coefficient[(t, p.ion_key)]
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
    t_range = (float(t_min), float(t_max)) if form is not None else None
    return ResolvedParameters(set_id, kind, values, a_phi, m_max, source, citation, bool(from_memory),
                              stderr, covariance, temperature_k, m_min, form, t_range, coefficients)


_SET_COLUMNS = "id, set_id, kind, source, a_phi, from_memory, temperature_k, temperature_form, t_min_k, t_max_k"


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
        "s.temperature_k, s.temperature_form, s.t_min_k, s.t_max_k, "
        "COUNT(DISTINCT v.target) AS n_targets, GROUP_CONCAT(DISTINCT v.target) AS targets "
        "FROM parameter_sets s LEFT JOIN parameter_values v ON v.set_pk = s.id "
        "GROUP BY s.id ORDER BY s.model, s.set_id")))


def load_set(store: Store, set_id: str) -> dict | None:
    """Everything stored about one parameter set: its header, values (per target) and source."""
    row = store.conn.execute(
        "SELECT id, set_id, kind, model, source, table_ref, temperature_k, a_phi, typed, note, settings, "
        "data_hashes, software_version, temperature_form, t_min_k, t_max_k FROM parameter_sets "
        "WHERE set_id = ?", (set_id,)).fetchone()
    if row is None:
        return None
    keys = ["pk", "set_id", "kind", "model", "source", "table_ref", "temperature_k", "a_phi", "typed", "note",
            "settings", "data_hashes", "software_version", "temperature_form", "t_min_k", "t_max_k"]
    doc = dict(zip(keys, row))
    t_min, t_max = doc.pop("t_min_k"), doc.pop("t_max_k")
    if doc["temperature_form"] is None:
        del doc["temperature_form"]  # a set at one temperature reads as it did before forms
    else:
        doc["temperature_range_k"] = [t_min, t_max]
        doc["coefficients"] = [dict(zip(["target", "name", "coefficient", "value"], c)) for c in store.conn.execute(
            "SELECT target, name, coefficient, value FROM parameter_coefficients WHERE set_pk = ? "
            "ORDER BY target, name, coefficient", (doc["pk"],))]
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


# -- values for a solution: every key a composition needs, from a list of sets ------------------
class OwnedKey(Protocol):
    """A parameter in a solution, as the model contract keys it (``saltbench.models.ParameterKey``):
    its name and what it belongs to (ion or salt names, cations before anions)."""

    @property
    def name(self) -> str: ...
    @property
    def owner(self) -> tuple[str, ...]: ...


K = TypeVar("K", bound=OwnedKey)
_ION_NAME = re.compile(r"^.+?([+-])\d*$")


@dataclass
class CompositionParameters(Generic[K]):
    """Stored values for the keys of one composition: ``values`` (key -> value), ``set_of`` (key ->
    the set id that gave it) and ``missing`` (the keys no set gave, in the order asked)."""

    values: dict[K, float]
    set_of: dict[K, str]
    missing: list[K]
    #: a temperature form's further coefficients of a key, where its set gives a form
    coefficients: dict[K, dict[str, float]] = field(default_factory=dict)


def _sign(ion: str) -> str | None:
    match = _ION_NAME.match(ion)
    return match.group(1) if match else None


def _lookups(owner: tuple[str, ...]) -> list[tuple[str, str]]:
    """Where a key with ``owner`` may be stored: (kind, target) in order of preference."""
    if len(owner) == 1:
        return [("ion", owner[0]), ("electrolyte", owner[0])]
    signs = [_sign(o) for o in owner]
    if len(owner) == 2 and signs == ["+", "-"]:
        return [("pair", "/".join(owner))]
    if len(owner) in (2, 3):
        try:
            return [("ions", "/".join(ion_group("/".join(owner))))]
        except ValueError:
            return []
    return []


def _set_index(store: Store, pk: int, with_coefficients: bool = False) -> dict[tuple[str, str, str], Any]:
    """One set's values by (kind, target, name); electrolyte rows also by their cation-anion pair
    ('pair', 'Na+/Cl-'), ion rows by the ion's name ('Na+', whether stored as 'Na' or 'Na+').
    ``with_coefficients``: each value is (value, the form's further coefficients) instead."""
    index: dict[tuple[str, str, str], Any] = {}
    further = _coefficients(store, pk) if with_coefficients else {}
    for target, kind, name, number in store.conn.execute(
            "SELECT target, target_kind, name, value FROM parameter_values WHERE set_pk = ?", (pk,)):
        value: Any = float(number)
        if with_coefficients:
            value = (value, further.get((target, name), {}))
        if kind == "electrolyte":
            index[("electrolyte", target, name)] = value
            try:
                salt = parse_formula(target)
            except ValueError:
                continue  # a salt of ions declared in a dataset: found by its name only
            index.setdefault(("pair", f"{salt.cation.name}/{salt.anion.name}", name), value)
        elif kind == "ion":
            ion = KNOWN_IONS[target].name if target in KNOWN_IONS else target
            index[("ion", ion, name)] = value
        else:
            index[(kind, target, name)] = value
    return index


def composition_values(store: Store, model_id: str, set_ids: Sequence[str],
                       keys: Iterable[K]) -> CompositionParameters[K]:
    """The value of each of ``keys`` (a model's keys for a composition, e.g. ``model.keys_for(c)``)
    from the sets ``set_ids`` of model ``model_id``, the first set that holds a key giving it.

    A cation-anion pair's key (``beta0[Na+/Cl-]``) is found in an electrolyte row of the salt of
    that pair (``NaCl``); a per-ion key in an ion row (``Na`` or ``Na+``); a per-salt key in its
    electrolyte row; a like-charged pair's or a triplet's key (``theta[K+/Na+]``,
    ``psi[K+/Na+/Cl-]``) in an ``ions`` row, whatever the order of its owner. Model-wide keys
    (``b``) are never stored: they come back in ``missing``, with every key no set holds. Raises
    :class:`UserError` for a set the store does not hold or one of another model.
    """
    indexes: list[tuple[str, dict[tuple[str, str, str], Any]]] = []
    for set_id in set_ids:
        row = store.conn.execute("SELECT id, model, temperature_form FROM parameter_sets WHERE set_id = ?",
                                 (set_id,)).fetchone()
        if row is None:
            known = ", ".join(r[0] for r in store.conn.execute(
                "SELECT set_id FROM parameter_sets WHERE model = ? ORDER BY set_id", (model_id,)))
            raise UserError(f"no parameter set {set_id!r} in the store; sets for model "
                            f"{model_id}: {known or 'none'}")
        if row[1] != model_id:
            raise UserError(f"parameter set {set_id!r} belongs to model {row[1]}, not {model_id}")
        indexes.append((set_id, _set_index(store, int(row[0]), with_coefficients=row[2] is not None)))
    out: CompositionParameters[K] = CompositionParameters({}, {}, [])
    for key in keys:
        for set_id, index in indexes:
            hit = next((index[(kind, target, key.name)] for kind, target in _lookups(key.owner)
                        if (kind, target, key.name) in index), None)
            if hit is not None:
                if isinstance(hit, tuple):
                    hit, further = hit
                    if further:
                        out.coefficients[key] = further
                out.values[key], out.set_of[key] = hit, set_id
                break
        else:
            out.missing.append(key)
    return out


@dataclass(frozen=True)
class SetInfo:
    """What a solution lookup needs to know of one stored set."""

    set_id: str
    kind: str
    source: str
    temperature_k: float
    from_memory: bool
    m_max: dict[str, float]  # electrolyte -> highest molality its values were fitted to
    temperature_form: str | None = None  # None: values at temperature_k only
    temperature_range_k: tuple[float, float] | None = None  # where the authors fitted the form


def model_sets(store: Store, model_id: str, set_ids: Sequence[str] | None = None) -> list[SetInfo]:
    """The stored sets of ``model_id``: the published ones in set-id order, or those named in
    ``set_ids`` in that order (a set the store lacks, or of another model, is a UserError)."""
    if set_ids is None:
        rows = store.conn.execute(
            "SELECT id, set_id, kind, source, temperature_k, from_memory, temperature_form, t_min_k, t_max_k "
            "FROM parameter_sets WHERE model = ? AND kind = 'published' ORDER BY set_id", (model_id,)).fetchall()
    else:
        rows = []
        for set_id in set_ids:
            row = store.conn.execute(
                "SELECT id, set_id, kind, source, temperature_k, from_memory, temperature_form, t_min_k, "
                "t_max_k, model FROM parameter_sets WHERE set_id = ?", (set_id,)).fetchone()
            if row is None:
                raise UserError(f"no parameter set {set_id!r} in the store ('saltbench params list' "
                                "shows them)")
            if row[-1] != model_id:
                raise UserError(f"parameter set {set_id!r} belongs to model {row[-1]}, not {model_id}")
            rows.append(row[:-1])
    out = []
    for pk, set_id, kind, source, temperature_k, from_memory, form, t_min, t_max in rows:
        ranges = {t: float(m) for t, m in store.conn.execute(
            "SELECT target, MAX(m_max) FROM parameter_values WHERE set_pk = ? AND target_kind = "
            "'electrolyte' AND m_max IS NOT NULL GROUP BY target", (pk,))}
        out.append(SetInfo(set_id, kind, source or "", float(temperature_k), bool(from_memory), ranges,
                           form, (float(t_min), float(t_max)) if form is not None else None))
    return out


def set_model(store: Store, set_id: str) -> str | None:
    """The model a stored set belongs to, or None when the store has no such set."""
    row = store.conn.execute("SELECT model FROM parameter_sets WHERE set_id = ?", (set_id,)).fetchone()
    return None if row is None else str(row[0])
