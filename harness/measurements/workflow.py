"""What the ``readings``, ``convert`` and ``ion-activity`` commands do, as functions of a Session.

These glue the pure reductions of this package to the store and the model registry: a stored
model and parameter set gives an isopiestic reference's osmotic coefficient and the MacInnes
gamma±(KCl); the stored Kielland and SIT sets give ion sizes and interaction coefficients.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, cast

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import UserError
from saltbench.measurements import conventions as conv
from saltbench.measurements.reduce import Reduction, reduce_set
from saltbench.store import measurements as store_ms

if TYPE_CHECKING:
    from saltbench.measurements.gibbs_duhem import GibbsDuhemResult

MACINNES_MODEL = "pitzer"
MACINNES_PARAMS = "pitzer-mayorga-1973"
ION_SIZE_SET = "kielland-1937"
SIT_SET = "sit-grenthe-1992"
CONVENTIONS = ("macinnes", "bates-guggenheim", "debye-huckel", "extended-debye-huckel", "davies",
               "truesdell-jones", "sit")


def model_function(session, model_id: str, set_id: str, electrolyte: Electrolyte,
                   what: str = "osmotic"):
    """phi(m) or gamma±(m) of ``electrolyte`` from a stored model and parameter set."""
    from saltbench.api import eval_context
    from saltbench.models.evaluate import evaluate
    from saltbench.store import parameter_sets as ps

    model = session.registry.model(model_id)
    params = ps.by_id(session.store, model, electrolyte, set_id)
    ctx = eval_context(model, electrolyte, params)

    def f(m: np.ndarray) -> np.ndarray:
        ev = evaluate(model, electrolyte, np.atleast_1d(np.asarray(m, float)), params.values, ctx=ctx)
        return ev.osmotic if what == "osmotic" else ev.gamma_pm

    label = f"model {model_id} with parameter set {set_id}"
    if params.from_memory:
        label += " (typed from memory; verify)"
    return f, label, params


def reduce_stored(session, key: str, method: str | None = None) -> tuple[Reduction, str | None]:
    """Reduce the stored measurement set ``key`` and store (or replace) its reduced dataset."""
    ms = store_ms.load_set(session.store, key)
    kwargs: dict = {}
    marks: list[str] = []
    if ms.kind == "isopiestic":
        reference = session.electrolyte(str(ms.settings["reference"]))
        f, label, params = model_function(session, str(ms.settings["reference_model"]),
                                          str(ms.settings["reference_params"]), reference)
        kwargs = {"reference": reference, "reference_osmotic": f, "reference_label": label}
        marks = _reference_marks(session, ms, reference, params)
    red = reduce_set(ms, method, **kwargs)
    if marks:
        red.details["extrapolation"] = marks
        red.cautions = tuple(red.cautions) + tuple(f"extrapolated: {m}" for m in marks)
    return red, store_ms.store_reduction(session.store, ms, red)


def _reference_marks(session, ms, reference: Electrolyte, params) -> list[str]:
    """Where an isopiestic reduction leans on its reference set outside that set's ground."""
    model = session.registry.model(str(ms.settings["reference_model"]))
    marks = []
    if abs(ms.temperature_k - params.temperature_k) >= 0.01:
        marks.append(f"the reference set {params.set_id} holds values for {params.temperature_k:g} K; the "
                     f"readings are at {ms.temperature_k:g} K and its values are used unchanged")
    limits = [x for x in (params.m_max, model.validity.max_molality_for(reference) if model.validity else None)
              if x is not None]
    top = float(np.max(ms.reading))
    if limits and top > min(limits) * (1 + 1e-9):
        marks.append(f"reference molalities up to {top:g} mol/kg go beyond the {min(limits):g} mol/kg "
                     f"the reference set {params.set_id} stands on")
    return marks


def all_keys(session) -> list[str]:
    return [r[0] for r in session.store.conn.execute("SELECT key FROM measurement_sets ORDER BY key")]


# -- Gibbs-Duhem conversion of stored data ----------------------------------------------------

@dataclass
class Conversion:
    electrolyte: Electrolyte
    dataset: str
    direction: str
    result: GibbsDuhemResult


def convert_stored(session, electrolyte: str, from_: str, dataset: str | None = None,
                   fit_points: int = 5) -> Conversion:
    """Convert a stored osmotic (or gamma±) dataset to the other property by Gibbs-Duhem."""
    from saltbench.measurements.gibbs_duhem import activity_from_osmotic, osmotic_from_activity

    e = session.electrolyte(electrolyte)
    prop = {"osmotic": "osmotic", "gamma": "gamma_pm"}[from_]
    ds = session.datasets(e.name)
    ds = ds[ds.property == prop] if not ds.empty else ds
    if ds.empty:
        raise UserError(f"no {prop} dataset for {e.name} in the store")
    if dataset is None:
        if len(ds) > 1:
            raise UserError(f"{e.name} has {len(ds)} {prop} datasets ({', '.join(ds.key)}); "
                            "choose one with --dataset")
        row = ds.iloc[0]
    else:
        match = ds[ds.key == dataset]
        if match.empty:
            raise UserError(f"no {prop} dataset {dataset!r} for {e.name} (known: {', '.join(ds.key)})")
        row = match.iloc[0]
    pts = session.points(e.name)
    pts = pts[pts.dataset_id == row["id"]].sort_values("molality")
    t = float(row["temperature_k"])
    m, v, u = (pts[c].to_numpy(float) for c in ("molality", "value", "uncertainty"))
    if from_ == "osmotic":
        res = activity_from_osmotic(e, m, v, t, u_osmotic=u, fit_points=fit_points)
    else:
        res = osmotic_from_activity(e, m, v, t, u_gamma_pm=u, fit_points=fit_points)
    return Conversion(e, str(row["key"]), res.direction, res)


# -- single-ion activities --------------------------------------------------------------------

def parse_salts(session, specs: Sequence[str]) -> list[tuple[Electrolyte, float]]:
    """``["NaCl=0.1", "KCl=0.05"]`` -> [(NaCl, 0.1), (KCl, 0.05)] (molality in mol/kg)."""
    from saltbench.chemistry.electrolyte import parse_formula

    out = []
    for spec in specs:
        name, sep, value = spec.partition("=")
        if not sep:
            raise UserError(f"--salt: expected SALT=MOLALITY (mol/kg), e.g. NaCl=0.1, found {spec!r}")
        try:
            m = float(value)
        except ValueError:
            raise UserError(f"--salt {spec}: molality {value!r} is not a number") from None
        if not np.isfinite(m) or m <= 0:
            raise UserError(f"--salt {spec}: the molality must be positive (mol/kg)")
        try:
            e = session.electrolyte(name.strip())
        except UserError:
            try:
                e = parse_formula(name.strip())
            except ValueError as exc:
                raise UserError(f"--salt {spec}: {exc}; the salts here are those of known ions "
                                "('saltbench data list' shows the stored ones)") from None
        out.append((e, m))
    if not out:
        raise UserError("give at least one --salt SALT=MOLALITY")
    return out


def _ion_values(session, set_id: str, name: str) -> dict[str, float]:
    rows = session.store.conn.execute(
        "SELECT v.target, v.value FROM parameter_values v JOIN parameter_sets s ON s.id = v.set_pk "
        "WHERE s.set_id = ? AND v.target_kind = 'ion' AND v.name = ?", (set_id, name)).fetchall()
    if not rows:
        raise UserError(f"the store holds no parameter set {set_id!r} with ion values {name!r}")
    return {t: float(v) for t, v in rows}


def _set_note(session, set_id: str) -> str:
    row = session.store.conn.execute("SELECT from_memory FROM parameter_sets WHERE set_id = ?",
                                     (set_id,)).fetchone()
    return f"parameter set {set_id}" + (" (typed from memory; verify)" if row and row[0] else "")


@dataclass
class IonActivity:
    result: conv.SingleIonResult
    sources: list[str]  # where each parameter came from
    notes: list[str]


def ion_activity(session, salts: Sequence[tuple[Electrolyte, float]], convention: str,
                 temperature_k: float = 298.15, *, b_ion: dict[str, float] | None = None,
                 missing: str = "error") -> IonActivity:
    """Single-ion activity coefficients of ``salts`` under ``convention`` (see CONVENTIONS)."""
    if convention not in CONVENTIONS:
        raise UserError(f"unknown convention {convention!r} (choose: {', '.join(CONVENTIONS)})")
    sources: list[str] = []
    notes: list[str] = []
    comp = list(salts)
    if convention == "bates-guggenheim":
        res = conv.bates_guggenheim(comp, temperature_k)
        sources.append("log10 gamma(Cl-) = -A sqrt(I)/(1 + 1.5 sqrt(I)), A from IAPWS water "
                       "properties at the given temperature")
        notes.append("the convention assigns gamma(Cl-) only; other ions are not defined by it")
    elif convention == "debye-huckel":
        res = conv.debye_huckel_limiting(comp, temperature_k)
    elif convention == "davies":
        res = conv.davies(comp, temperature_k)
    elif convention in ("extended-debye-huckel", "truesdell-jones"):
        sizes = _ion_values(session, ION_SIZE_SET, "a")
        sources.append(f"ion sizes a_i from {_set_note(session, ION_SIZE_SET)}")
        if convention == "extended-debye-huckel":
            res = conv.extended_debye_huckel(comp, sizes, temperature_k)
        else:
            ions, _ = conv.ion_molalities(comp)
            given = dict(b_ion or {})
            absent = [n for n in ions if n not in given]
            if absent and missing == "error":
                raise UserError(f"Truesdell-Jones needs b_i (kg/mol) for {', '.join(absent)}: no "
                                "stored set holds them; give --b-ion ION=VALUE, or --missing zero")
            for n in absent:
                given[n] = 0.0
            if absent:
                notes.append(f"b_i taken as 0 for {', '.join(absent)} (--missing zero): for those "
                             "ions this is the extended Debye-Hückel form")
            sources.append("b_i as given on the command line" if b_ion else "no b_i given")
            res = conv.truesdell_jones(comp, sizes, given, temperature_k)
    elif convention == "sit":
        rows = session.store.conn.execute(
            "SELECT v.target, v.value FROM parameter_values v JOIN parameter_sets s ON s.id = v.set_pk "
            "WHERE s.set_id = ? AND v.target_kind = 'electrolyte' AND v.name = 'eps'",
            (SIT_SET,)).fetchall()
        if not rows:
            raise UserError(f"the store holds no SIT parameter set {SIT_SET!r}")
        eps = {}
        for target, value in rows:
            e = session.electrolyte(target)
            eps[(e.cation.name, e.anion.name)] = float(value)
        sources.append(f"eps(i, k) from {_set_note(session, SIT_SET)}")
        res = conv.sit(comp, eps, temperature_k, missing=missing)
        if res.parameters.get("taken_as_zero"):
            notes.append("eps taken as 0 for " + ", ".join(cast("tuple[str, ...]", res.parameters["taken_as_zero"])))
    else:  # macinnes
        from saltbench.chemistry.electrolyte import parse_formula

        if abs(temperature_k - 298.15) > 0.01:
            raise UserError(f"the MacInnes convention here takes gamma±(KCl) from {MACINNES_PARAMS}, "
                            "a set for 25 °C only; use --temperature 298.15")
        g_kcl, label, _ = _mean_at_ionic_strength(session, parse_formula("KCl"))
        sources.append("gamma(K+) = gamma(Cl-) = gamma±(KCl) at the same ionic strength from "
                       + label)
        mean = {}
        for salt, _m in comp:
            if salt.name == "KCl":
                continue
            if salt.cation.name != "K+" and salt.anion.name != "Cl-":
                raise UserError(f"{salt.name}: the MacInnes convention derives ions only from salts "
                                "of K+ or Cl- with one other ion")
            mean[salt], other_label, _ = _mean_at_ionic_strength(session, salt)
            sources.append(f"gamma±({salt.name}) at the same ionic strength from {other_label}")
        res = conv.macinnes(comp, g_kcl, temperature_k, mean_gammas=mean)
    return IonActivity(res, sources, notes)


def _mean_at_ionic_strength(session, salt: Electrolyte):
    """gamma±(salt) as a function of ionic strength, from the stored MacInnes model set."""
    e = session.electrolyte(salt.name)
    f, label, _ = model_function(session, MACINNES_MODEL, MACINNES_PARAMS, e, what="gamma")
    per = float(e.ionic_strength(1.0))
    return (lambda i: f(np.atleast_1d(i) / per).reshape(np.shape(i))), label, per
