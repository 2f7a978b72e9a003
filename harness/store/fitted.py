"""Saving fits as parameter sets, with what is needed to trust and repeat them."""

from __future__ import annotations

import hashlib
import json

from saltbench import __version__
from saltbench.errors import UserError
from saltbench.store.connection import Store


def fit_set_id(model: str, electrolytes: list[str], settings: dict, data_hashes: list[str]) -> str:
    """A deterministic id: the same fit of the same data gets the same id (re-saving updates it)."""
    doc = json.dumps({"model": model, "electrolytes": electrolytes, "settings": settings,
                      "data": sorted(data_hashes)}, sort_keys=True)
    digest = hashlib.sha256(doc.encode()).hexdigest()[:8]
    slug = "-".join(e.lower().replace("(", "").replace(")", "") for e in electrolytes)[:40]
    return f"fit-{model}-{slug}-{digest}"


def _upsert(store: Store, existing: tuple | None, row: dict) -> int:
    """The set's row written (its old values and covariance cleared when it is re-saved); its
    primary key. Inside the caller's transaction."""
    if existing:
        pk = int(existing[0])
        store.conn.execute("DELETE FROM parameter_values WHERE set_pk = ?", (pk,))
        store.conn.execute("DELETE FROM parameter_covariances WHERE set_pk = ?", (pk,))
        store.db.table("parameter_sets").update(pk, row)
        return pk
    return int(store.db.table("parameter_sets").insert(row).last_pk)  # type: ignore[arg-type]


def save_fit(store: Store, result, *, set_id: str, settings: dict, data_hashes: list[str],
             electrolytes: list[str], temperature_k: float, note: str = "", a_phi: float | None = None,
             temperature_form: str | None = None, temperature_range_k: tuple[float, float] | None = None,
             coefficients: dict[tuple[str, str], dict[str, float]] | None = None) -> str:
    """Store a FitResult (single or joint) as a fitted parameter set; returns its id.

    A fit across temperatures gives ``temperature_form``, the range of its data
    (``temperature_range_k``) and each parameter's further coefficients by (electrolyte, model
    parameter name); its values are then the first coefficients and ``temperature_k`` the
    form's reference temperature, as a parameter file with a form has them. Its covariance,
    which is over coefficients, is not stored."""
    existing = store.conn.execute("SELECT id, kind FROM parameter_sets WHERE set_id = ?", (set_id,)).fetchone()
    if existing and existing[1] != "fitted":
        raise UserError(f"parameter set {set_id!r} is a published set; choose another --name")
    summary = result.to_dict()
    values = {
        "set_id": set_id, "kind": "fitted", "origin": "user", "provider": "saltbench fit",
        "model": result.model, "source": None, "table_ref": "", "temperature_k": temperature_k,
        "a_phi": a_phi, "typed": f"fitted by saltbench {__version__}", "from_memory": 0,
        "note": note, "file": "", "content_hash": hashlib.sha256(json.dumps(summary, sort_keys=True,
                                                                             default=str).encode()).hexdigest(),
        "settings": json.dumps({**settings, "residuals": summary["residuals"], "flags": summary["flags"],
                                "molality_min": float(min(result.molality)) if len(result.molality) else None,
                                "converged": summary["converged"], "electrolytes": electrolytes},
                               sort_keys=True, default=str),
        "data_hashes": json.dumps(sorted(data_hashes)), "software_version": __version__,
    }
    if temperature_form is not None:
        if temperature_range_k is None:
            raise ValueError("a set with a temperature form needs its temperature range")
        values.update(temperature_form=temperature_form, t_min_k=float(temperature_range_k[0]),
                      t_max_k=float(temperature_range_k[1]))
    stderr = result.stderrs
    with store.transaction():
        pk = _upsert(store, existing, values)
        rows = []
        for e in electrolytes:
            for name, gname in result.param_map[e].items():
                rows.append({"set_pk": pk, "target": e, "target_kind": "electrolyte", "name": name,
                             "value": float(result.values[gname]),
                             "stderr": None if stderr.get(gname) is None else float(stderr[gname]),
                             "m_max": float(max(result.molality)) if len(result.molality) else None})
        store.db.table("parameter_values").insert_all(rows)
        if temperature_form is not None:
            store.conn.execute("DELETE FROM parameter_coefficients WHERE set_pk = ?", (pk,))
            store.db.table("parameter_coefficients").insert_all([
                {"set_pk": pk, "target": target, "name": name, "coefficient": c, "value": float(v)}
                for (target, name), table in sorted((coefficients or {}).items()) for c, v in table.items()])
        elif existing:
            store.conn.execute("UPDATE parameter_sets SET temperature_form = NULL, t_min_k = NULL, "
                               "t_max_k = NULL WHERE id = ?", (pk,))
        if temperature_form is None and len(electrolytes) == 1 and len(result.free_names):
            gmap = {g: n for n, g in result.param_map[electrolytes[0]].items()}
            names = [gmap.get(g, g) for g in result.free_names]
            store.db.table("parameter_covariances").insert({
                "set_pk": pk, "names": json.dumps(names),
                "matrix": json.dumps([[float(x) for x in row] for row in result.covariance])})
    return set_id


def save_mixing_fit(store: Store, *, set_id: str, model: str, values: list[tuple[str, str, float, float | None]],
                    covariance: tuple[list[str], list[list[float]]] | None, settings: dict,
                    data_hashes: list[str], temperature_k: float, max_ionic_strength: float,
                    note: str = "") -> str:
    """Store the mixing terms of a fit to mixture data as a fitted parameter set: ``values`` are
    (name, ion group as 'K+/Na+' or 'K+/Na+/Cl-', value, standard error), kept as ``ions`` rows
    (the lookup of :func:`saltbench.store.parameter_sets.composition_values` finds them);
    ``m_max`` of each row holds the highest ionic strength of the data. Returns the set id."""
    existing = store.conn.execute("SELECT id, kind FROM parameter_sets WHERE set_id = ?", (set_id,)).fetchone()
    if existing and existing[1] != "fitted":
        raise UserError(f"parameter set {set_id!r} is a published set; choose another --name")
    doc = {"values": values, "settings": settings}
    row = {
        "set_id": set_id, "kind": "fitted", "origin": "user", "provider": "saltbench fit --mixture",
        "model": model, "source": None, "table_ref": "", "temperature_k": temperature_k, "a_phi": None,
        "typed": f"fitted by saltbench {__version__}", "from_memory": 0, "note": note, "file": "",
        "content_hash": hashlib.sha256(json.dumps(doc, sort_keys=True, default=str).encode()).hexdigest(),
        "settings": json.dumps(settings, sort_keys=True, default=str),
        "data_hashes": json.dumps(sorted(data_hashes)), "software_version": __version__,
    }
    with store.transaction():
        pk = _upsert(store, existing, row)
        store.db.table("parameter_values").insert_all([
            {"set_pk": pk, "target": group, "target_kind": "ions", "name": name, "value": float(value),
             "stderr": None if se is None else float(se), "m_max": float(max_ionic_strength)}
            for name, group, value, se in values])
        if covariance is not None and covariance[0]:
            store.db.table("parameter_covariances").insert({
                "set_pk": pk, "names": json.dumps(covariance[0]),
                "matrix": json.dumps([[float(x) for x in r] for r in covariance[1]])})
    return set_id
