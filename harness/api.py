"""The Python API: everything the command line does, as functions returning DataFrames.

    from saltbench.api import Session
    s = Session()                      # default store, seeded from the bundled data on first use
    s.electrolytes()                   # DataFrame
    s.points("NaCl")                   # DataFrame of every stored point for NaCl
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from functools import cached_property
from pathlib import Path
from typing import TYPE_CHECKING, Any, cast

import numpy as np

from saltbench.store import queries
from saltbench.store.bundled import sync_bundled
from saltbench.store.connection import Store, open_store
from saltbench.store.ingest import IngestReport, expand_paths, ingest

if TYPE_CHECKING:
    import pandas as pd

    from saltbench.fitting.uncertainty import Propagation
    from saltbench.measurements.gibbs_duhem import GibbsDuhemResult


class Session:
    """A store plus, on first need, the plugin registry. Cheap to create."""

    def __init__(self, store: str | os.PathLike[str] | Store | None = None, *,
                 plugin_files: Sequence[str | os.PathLike[str]] = (), disabled: Sequence[str] = (),
                 seed: bool = True):
        self._plugin_files = list(plugin_files)
        self._disabled = list(disabled)
        self.store = store if isinstance(store, Store) else open_store(store)
        if seed:
            self.refresh_bundled()

    # -- plugins ------------------------------------------------------------------------------
    @cached_property
    def registry(self):
        from saltbench.models.discovery import build_registry

        return build_registry(self._plugin_files, self._disabled)

    def plugin_data_files(self) -> list[tuple[str, Path]]:
        if not self._plugin_files and not _has_third_party_entry_points():
            return []
        out = []
        for hook in ("register_data_files", "register_parameter_sets"):
            for rec, path in self.registry.call_list_hook(hook):
                if rec.name == "saltbench" or rec.kind == "entry-point" and rec.path.startswith("saltbench.plugins"):
                    continue
                out.append((rec.name, Path(path)))
        return out

    # -- data ---------------------------------------------------------------------------------
    def refresh_bundled(self, force: bool = False) -> IngestReport | None:
        return sync_bundled(self.store, self.plugin_data_files(), force=force,
                            check_parameters=check_parameter_file)

    def add(self, paths: Sequence[str | os.PathLike[str]]) -> IngestReport:
        """Load user files; a folder stands for its bibliographies (``*.sources.txt``,
        ``sources.txt``) and datasets or parameter files (``*.csv``)."""
        return ingest(self.store, expand_paths(paths), origin="user", provider="user",
                      # the plugins are loaded only for a file with coefficient columns to check
                      check_parameters=lambda pf: check_parameter_file(
                          pf, self.registry if pf.coefficient_columns else None))

    def remove(self, key: str, force: bool = False) -> list[str]:
        """Remove one of your own datasets (see :func:`saltbench.store.ingest.remove_dataset`)."""
        from saltbench.store.ingest import remove_dataset

        return remove_dataset(self.store, key, force=force)

    def electrolytes(self) -> pd.DataFrame:
        return queries.electrolytes(self.store)

    def electrolyte_names(self) -> list[str]:
        """The names of the stored electrolytes with data, as :meth:`electrolytes` orders them."""
        return queries.electrolyte_names(self.store)

    def datasets(self, electrolyte: str | None = None) -> pd.DataFrame:
        return queries.datasets(self.store, self.electrolyte(electrolyte).name if electrolyte else None)

    def points(self, electrolyte: str | None = None) -> pd.DataFrame:
        return queries.points(self.store, self.electrolyte(electrolyte).name if electrolyte else None)

    def electrolyte(self, name: str):
        return queries.electrolyte(self.store, name)

    def temperatures(self, electrolyte: str | None = None) -> list[float]:
        """The temperatures in K at which the stored points (of ``electrolyte``) lie."""
        return queries.temperatures(self.store, self.electrolyte(electrolyte).name if electrolyte else None)

    def content_hash(self) -> str:
        return queries.content_hash(self.store)


def check_parameter_file(pf, registry=None) -> None:
    """What the file reader cannot check of a parameter file with a temperature form: the form's
    name and coefficients (``saltbench.models.temperature``) and, given the plugin ``registry``
    and a model it knows, that every coefficient column belongs to one of the model's
    parameters. Raises :class:`InputFileError` naming the file, line and field."""
    from saltbench.errors import InputFileError
    from saltbench.models.temperature import coefficient_problem

    if pf.temperature_form is None:
        return
    problem = coefficient_problem(pf.temperature_form, [k for _, k in pf.coefficient_columns])
    if problem is not None:
        bad = next((f"{n}.{k}" for n, k in pf.coefficient_columns
                    if coefficient_problem(pf.temperature_form, [k]) is not None), None)
        if bad is None or coefficient_problem(pf.temperature_form, []) is not None:
            raise InputFileError(pf.path, pf.form_line, "temperature_form", problem)
        raise InputFileError(pf.path, pf.columns_line, bad, problem)
    from saltbench.models.temperature import form

    reference = form(pf.temperature_form).reference_k
    if abs(reference - pf.temperature_k) >= 0.01:
        raise InputFileError(pf.path, pf.form_line, "temperature_form", f"form {pf.temperature_form} "
                             f"expands about {reference:g} K, but the set's temperature is "
                             f"{pf.temperature_k:g} K (the plain columns hold the values at the reference)")
    if registry is None or not pf.coefficient_columns or pf.model not in registry.models:
        return
    model = registry.model(pf.model)
    names = {p.name for p in model.parameters} | {p.ion_key for p in model.parameters if p.ion_key}
    for name, k in pf.coefficient_columns:
        if name not in names:
            raise InputFileError(pf.path, pf.columns_line, f"{name}.{k}",
                                 f"model {model.id} has no parameter {name!r}")


def plugin_registry(plugin_files: Sequence[str | os.PathLike[str]] = (), disabled: Sequence[str] = ()):
    """The discovered plugins and models, without opening a store (what :attr:`Session.registry`
    holds): a :class:`saltbench.models.discovery.PluginRegistry`."""
    from saltbench.models.discovery import build_registry

    return build_registry(list(plugin_files), list(disabled))


def _has_third_party_entry_points() -> bool:
    from importlib import metadata

    from saltbench.models.discovery import ENTRY_POINT_GROUP, ENV_PLUGINS

    if os.environ.get(ENV_PLUGINS):
        return True
    return any((ep.dist.name if ep.dist else "") != "saltbench"
               for ep in metadata.entry_points(group=ENTRY_POINT_GROUP))


def check_data(session: Session, electrolytes: Sequence[str] = ()):
    """Run the data checks over the store (or the named electrolytes)."""
    from saltbench.curation.checks import CheckReport, check_electrolyte

    report = CheckReport()
    names = [session.electrolyte(n).name for n in electrolytes] or session.electrolyte_names()
    for name in names:
        e = session.electrolyte(name)
        part = check_electrolyte(e, session.points(name))
        report.findings += part.findings
        report.summary += part.summary
    return report


def temperature_rank(params, temperature_k: float | Sequence[float] | np.ndarray | None) -> int:
    """Where a set stands at ``temperature_k`` (every one of them, for several), lower first:
    0 values given at that very temperature; 1 a temperature form whose fitted range holds it;
    2 a form used outside its range (an extrapolation along the authors' temperature
    dependence); 3 values of another temperature, used unchanged. None: 0 for every set."""
    from saltbench.water.basis import SAME_TEMPERATURE_K

    if temperature_k is None:
        return 0
    t = np.atleast_1d(np.asarray(temperature_k, dtype=float))
    if params.temperature_range_k is not None:
        low, high = params.temperature_range_k
        return 1 if bool(np.all((t >= low - SAME_TEMPERATURE_K) & (t <= high + SAME_TEMPERATURE_K))) else 2
    return 0 if bool(np.all(np.abs(t - params.temperature_k) < SAME_TEMPERATURE_K)) else 3


def preferred_sets(found: Sequence, temperature_k: float | Sequence[float] | None) -> list:
    """The published sets of a model for one salt in the order they are chosen at
    ``temperature_k`` (every one of them, for several: the set whose ground covers them all comes
    first; None: as stored, by set id): by :func:`temperature_rank`, then by set id.
    So at 25 °C a set of 25 °C values comes before a set whose form covers 25 °C, and at 75 °C a
    form covering 75 °C before a set of 25 °C values used unchanged."""
    return sorted(found, key=lambda p: temperature_rank(p, temperature_k))


def params_at(params, temperature_k: float):
    """``params`` with each value at ``temperature_k`` through its set's temperature form
    (unchanged for a set without one)."""
    from saltbench.models.temperature import values_at

    if getattr(params, "temperature_form", None) is None or not params.coefficients:
        return params
    return replace(params, values=values_at(params.temperature_form, params.values, params.coefficients,
                                            temperature_k))


def resolve_parameters(session: Session, model, electrolyte, choice: str = "auto",
                       temperature_k: float | None = None):
    """Parameters for ``model`` and ``electrolyte``: ``auto`` (published if any, else defaults),
    ``published`` (the first published set by :func:`preferred_sets` at ``temperature_k``),
    ``defaults``, or a parameter-set id. Values are as stored (see :func:`params_at`)."""
    from saltbench.errors import UserError
    from saltbench.store import parameter_sets as ps

    if choice in ("auto", "published"):
        found = preferred_sets(ps.published(session.store, model, electrolyte), temperature_k)
        if found:
            return found[0]
        if choice == "published":
            raise UserError(f"no published parameters for model {model.id} and {electrolyte.name}; "
                            "use --params defaults, or fit them with 'saltbench fit'")
    if choice in ("auto", "defaults"):
        return ps.ResolvedParameters("defaults", "defaults", model.defaults(electrolyte))
    return ps.by_id(session.store, model, electrolyte, choice)


def export_parameter_set(session: Session, set_id: str, folder: str | os.PathLike[str]) -> list[Path]:
    """Write a stored parameter set as files ``saltbench data add`` reads back to the same values:
    ``<set>.params.csv`` and ``<set>.sources.txt`` (its citation; for a fitted set, an entry that
    says what it was fitted to)."""
    from datetime import date

    from saltbench import __version__
    from saltbench.curation.bibliography import format_entry
    from saltbench.curation.parameters import format_parameter_file
    from saltbench.errors import UserError
    from saltbench.store.parameter_sets import load_set

    doc = load_set(session.store, set_id)
    if doc is None:
        raise UserError(f"no parameter set {set_id!r} in the store (see 'saltbench params')")
    out = Path(folder)
    if not out.is_dir():
        raise UserError(f"--export {out}: no such folder")
    kinds = {v["target_kind"] for v in doc["values"]}
    if len(kinds) != 1:
        raise UserError(f"parameter set {set_id} mixes electrolyte and ion rows; it cannot be written as one file")
    rows: dict[str, tuple[dict[str, float], float | None]] = {}
    for v in doc["values"]:
        values, m_max = rows.get(v["target"], ({}, None))
        values[v["name"]] = v["value"]
        rows[v["target"]] = (values, v["m_max"] if v["m_max"] is not None else m_max)
    if doc["kind"] == "fitted":
        source = set_id
        electrolytes = ", ".join(rows)
        entry = format_entry(source, {
            "authors": f"saltbench {doc['software_version'] or __version__}",
            "title": f"Parameter set {set_id}: model {doc['model']} fitted to the stored data of {electrolytes}",
            "publisher": "saltbench fit", "year": date.today().year,
            "note": "data content hashes " + ", ".join(h[:12] for h in doc["data_hashes"])})
        typed = (doc["typed"] if doc["typed"].lower().startswith("fitted")
                 else f"fitted by saltbench to {electrolytes}")
    else:
        source = doc["source"]
        src = doc["source_entry"] or {}
        entry = format_entry(source, src) if src else ""
        typed = doc["typed"]
    text = format_parameter_file(set_id=set_id, model=doc["model"], source=source, table=doc["table_ref"],
                                 temperature_k=doc["temperature_k"], a_phi=doc["a_phi"], typed=typed,
                                 note=doc["note"], target_kind=kinds.pop(),
                                 rows=[(t, v, m) for t, (v, m) in rows.items()],
                                 temperature_form=doc.get("temperature_form"),
                                 temperature_range_k=tuple(doc["temperature_range_k"])  # type: ignore[arg-type]
                                 if doc.get("temperature_range_k") else None,
                                 coefficients=_coefficients_by_target(doc.get("coefficients", [])))
    written = [out / f"{set_id}.params.csv"]
    written[0].write_text(text, encoding="utf-8")
    if entry:
        written.append(out / f"{set_id}.sources.txt")
        written[1].write_text(entry, encoding="utf-8")
    return written


def _coefficients_by_target(rows: Sequence[dict]) -> dict[str, dict[str, dict[str, float]]]:
    out: dict[str, dict[str, dict[str, float]]] = {}
    for r in rows:
        out.setdefault(r["target"], {}).setdefault(r["name"], {})[r["coefficient"]] = r["value"]
    return out


def parameter_sets(session: Session) -> pd.DataFrame:
    """One row per stored parameter set (published and fitted), with how many rows it holds."""
    from saltbench.store.parameter_sets import list_sets

    return list_sets(session.store)


def parameter_set(session: Session, set_id: str) -> dict | None:
    """Everything stored about one parameter set (None when the store does not hold it)."""
    from saltbench.store.parameter_sets import load_set

    return load_set(session.store, set_id)


def parameter_basis(params, temperature_k: float = 298.15, constant: str | float = "published"):
    """The Debye-Hückel constant and temperature ``params`` are evaluated at: the one decision
    (:mod:`saltbench.water.basis`) that predict, compare, fit and the report share."""
    from saltbench.water.basis import evaluation_basis

    set_t = None if params.kind == "defaults" else params.temperature_k
    return evaluation_basis(temperature_k, set_id=params.set_id, set_a_phi=params.a_phi,
                            set_temperature_k=set_t, constant=constant,
                            set_temperature_range_k=getattr(params, "temperature_range_k", None))


def eval_context(model, electrolyte, params, temperature_k: float = 298.15, own_constant: bool = True):
    """Context for evaluating ``params``: a published set with its authors' A_phi if asked."""
    from saltbench.models.evaluate import make_context

    basis = parameter_basis(params, temperature_k, "published" if own_constant else "current")
    return make_context(electrolyte, dh=basis.dh)


@dataclass
class Prediction:
    """One model's values at given molalities, with why each is, or is not, an extrapolation."""

    electrolyte: Any
    model: Any
    params: Any
    basis: Any
    evaluation: Any
    uncertainty: Propagation | None
    #: per molality, the reasons it is an extrapolation (empty: inside the ground of set and model)
    extrapolation: list[list[str]]


def extrapolation_reasons(model, electrolyte, params, m: np.ndarray, basis) -> list[list[str]]:
    """Why each molality lies outside what the parameter set and the model stand on."""
    claim = model.validity.max_molality_for(electrolyte) if model.validity else None
    span = model.validity.temperature_k if model.validity else None
    t = basis.dh.temperature_k
    out = []
    for x in m:
        why = []
        if params.m_min is not None and x < params.m_min * (1 - 1e-9):
            why.append(f"below the lowest molality the set was fitted to ({params.m_min:g} mol/kg)")
        if params.m_max is not None and x > params.m_max * (1 + 1e-9):
            why.append(f"above the highest molality the set was fitted to ({params.m_max:g} mol/kg)")
        if claim is not None and x > claim * (1 + 1e-9):
            why.append(f"beyond the range {model.id}'s authors claim ({claim:g} mol/kg)")
        if basis.off_temperature and basis.set_temperature_range_k is not None:
            low, high = basis.set_temperature_range_k
            why.append(f"at {t:g} K, outside {low:g}-{high:g} K, the range of the set's "
                       "temperature form")
        elif basis.off_temperature:
            why.append(f"at {t:g} K, the set holds values for {basis.set_temperature_k:g} K")
        elif (span is not None and basis.set_temperature_range_k is None
              and not model.validity.covers_temperature(t)):
            # a set with a temperature form speaks for its own range: the model's claimed
            # temperatures are those of its authors' one-temperature parameters
            why.append(f"at {t:g} K, outside the {span[0]:g}-{span[1]:g} K its authors claim")
        out.append(why)
    return out


def predict(session: Session, electrolyte: str, model_id: str, molality, params_choice: str = "auto",
            temperature_k: float = 298.15, constant: str | float = "published") -> Prediction:
    """gamma±, phi and a_w of one model with one parameter set, each value marked where it is an
    extrapolation. With no parameter set for a model that has parameters, it refuses (``auto``)
    rather than evaluate defaults; ``params_choice="defaults"`` asks for them knowingly."""
    from saltbench.errors import UserError
    from saltbench.models.discovery import plugin_output_to_stderr
    from saltbench.models.evaluate import check_supported, evaluate, make_context

    e = session.electrolyte(electrolyte)
    model = session.registry.model(model_id)
    check_supported(model, e)
    m = np.atleast_1d(np.asarray(molality, float))
    params = resolve_parameters(session, model, e, params_choice, temperature_k)
    if params.kind == "defaults" and params_choice == "auto" and model.free_parameters(e):
        raise UserError(f"no parameter set of {model.id} for {e.name}: fit one with 'saltbench fit {e.name} "
                        f"--model {model.id}', or name a stored set with --params SET ('saltbench params "
                        f"--model {model.id}' lists them); --params defaults uses the model's defaults knowingly")
    basis = parameter_basis(params, temperature_k, constant)
    ctx = make_context(e, dh=basis.dh)
    params = params_at(params, temperature_k)
    with plugin_output_to_stderr():
        ev = evaluate(model, e, m, params.values, ctx=ctx)
    unc = None
    if params.covariance is not None:
        from saltbench.fitting import propagate

        names, matrix = params.covariance
        unc = propagate(model, e, m, params={**model.defaults(e), **params.values},
                        covariance=np.array(matrix), names=names, dh=ctx.dh)
    return Prediction(e, model, params, basis, ev, unc, extrapolation_reasons(model, e, params, m, basis))


@dataclass
class ThermalPrediction:
    """One model's thermal properties of one salt (``saltbench.models.thermal``) with the
    prediction at the same molalities and temperature, its extrapolation marks included."""

    prediction: Prediction
    thermal: Any  # saltbench.models.thermal.ThermalProperties
    #: why the thermal values stand on less than the activity values do ('' none)
    caution: str


def predict_thermal(session: Session, electrolyte: str, model_id: str, molality, params_choice: str = "auto",
                    temperature_k: float = 298.15) -> ThermalPrediction:
    """L_phi, C_p,phi - C°_p,2, d ln gamma±/dT and the partial molar relative enthalpies of salt
    and water from one model with one parameter set, by the temperature derivatives of its excess
    Gibbs energy (:func:`saltbench.models.thermal.thermal_properties`): the set's parameters at
    each temperature of the stencil through its temperature form, the Debye-Hückel constants of
    water at each (never a published A_phi of one temperature)."""
    from saltbench.models.discovery import plugin_output_to_stderr
    from saltbench.models.thermal import thermal_properties

    p = predict(session, electrolyte, model_id, molality, params_choice, temperature_k, "current")
    stored = resolve_parameters(session, p.model, p.electrolyte, params_choice, temperature_k) \
        if p.params.kind != "defaults" else p.params
    base = {**p.model.defaults(p.electrolyte), **stored.values}

    def values_at(t: float) -> dict[str, float]:
        return params_at(replace(stored, values=base), t).values

    with plugin_output_to_stderr():
        thermal = thermal_properties(p.model, p.electrolyte, p.evaluation.molality, values_at,
                                     temperature_k=temperature_k)
    caution = ""
    if stored.temperature_form is None and p.model.free_parameters(p.electrolyte):
        caution = (f"parameter set {stored.set_id} gives no temperature dependence of its parameters, so "
                   "these thermal values carry only the Debye-Hückel part of the model and not the "
                   "salt's own; use a set with a temperature form")
    elif stored.temperature_form is not None and all(len(c) <= 1 for c in stored.coefficients.values()):
        caution = (f"parameter set {stored.set_id} gives first temperature derivatives only, so the heat "
                   "capacity misses the second derivatives of the parameters")
    return ThermalPrediction(p, thermal, caution)


@dataclass
class FitRun:
    """One model fitted to the data of one or more electrolytes (jointly), and where it was saved."""

    model: Any
    electrolytes: list[str]
    #: :class:`saltbench.fitting.FitResult`
    result: Any
    #: per electrolyte, (electrolyte, :class:`saltbench.fitting.selection.Selection`)
    selections: list[tuple[Any, Any]]
    #: the Debye-Hückel state the fit used (``a_phi``, ``origin``)
    dh: Any
    settings: dict
    data_hashes: list[str]
    parameter_set: str | None = None
    #: a fit across temperatures asked to cross-validate: :class:`saltbench.fitting.CrossValidation`
    cross_validation: Any = None


def fit(session: Session, electrolytes: Sequence[str], model_id: str, *, up_to: float | None = None,
        fix: Sequence[str] | dict[str, float] = (), free: Sequence[str] = (),
        datasets: Sequence[str] | None = None, on: str | Sequence[str] | None = None,
        temperature_k: float = 298.15, set_name: str | None = None, save: bool = True,
        dh_constant: str = "current", temperatures: Any = None, temperature_form: str | None = None,
        vary: Sequence[str] = (), cross_validation: str | None = None) -> FitRun:
    """Fit ``model_id``'s free parameters to the stored data of ``electrolytes`` (activity and
    osmotic jointly; several electrolytes give one joint fit with per-ion parameters shared by
    ion) and, with ``save``, store the result as a fitted parameter set.

    ``fix`` holds parameters at values (``{"b": 0.2}`` or ``["b=0.2"]``); ``free`` frees ones the
    model holds fixed by default; ``on`` names the properties (``"gamma,osmotic"`` or a list);
    ``dh_constant`` is ``current``, ``published`` or a value (see :func:`fit_constant`).

    Across temperatures: ``temperatures`` (``"LO:HI"`` or ``"T1,T2"`` in K, or a
    :class:`saltbench.fitting.selection.TemperatureChoice`) takes the data at those
    temperatures in place of ``temperature_k``, and the fit is :func:`fit_across_temperatures`
    (``temperature_form``, ``vary``, ``cross_validation``)."""
    if temperatures is not None:
        return fit_across_temperatures(
            session, electrolytes, model_id, temperatures, form=temperature_form or "reference-expansion",
            vary=vary, up_to=up_to, fix=fix, free=free, datasets=datasets, on=on, set_name=set_name,
            save=save, dh_constant=dh_constant, cross_validation=cross_validation)
    if temperature_form is not None or vary or cross_validation is not None:
        from saltbench.errors import UserError

        raise UserError("--temperature-form, --vary and --cross-validate need --temperatures")
    from saltbench.errors import UserError
    from saltbench.fitting import fit as run_fit
    from saltbench.fitting import fit_joint, parse_assignments
    from saltbench.fitting.selection import parse_on
    from saltbench.models.discovery import plugin_output_to_stderr
    from saltbench.scaffold.names import slug
    from saltbench.store.fitted import fit_set_id, save_fit

    model = session.registry.model(model_id)
    fixed = dict(fix) if isinstance(fix, dict) else parse_assignments(fix)
    props = parse_on(on or None) if on is None or isinstance(on, str) else list(on)
    datasets = list(datasets) if datasets else None
    sels = []
    for name in electrolytes:
        e = session.electrolyte(name)
        sels.append((e, select_data(session, e, datasets=datasets, on=props, up_to=up_to,
                                    temperature_k=temperature_k)))
    dh = fit_constant(session, model, [e for e, _ in sels], temperature_k, dh_constant)
    with plugin_output_to_stderr():
        if len(sels) == 1:
            e, sel = sels[0]
            result = run_fit(model, e, sel.data, fixed=fixed, free=list(free) or None, dh=dh)
        else:
            result = fit_joint(model, [(e, sel.data) for e, sel in sels], fixed=fixed, free=list(free) or None,
                               dh=dh)
    names = [e.name for e, _ in sels]
    hashes = [d["content_hash"] for _, sel in sels for d in sel.datasets]
    settings = {"up_to": up_to, "fix": fixed, "free": list(free), "data": datasets, "on": props,
                "temperature_k": temperature_k, "a_phi": dh.a_phi}
    run = FitRun(model, names, result, sels, dh, settings, hashes)
    if save:
        set_id = slug(set_name) if set_name else fit_set_id(model.id, names, settings, hashes)
        if not set_id:
            raise UserError("--name must contain letters or digits")
        run.parameter_set = save_fit(session.store, result, set_id=set_id, settings=settings, data_hashes=hashes,
                                     electrolytes=names, temperature_k=temperature_k,
                                     a_phi=None if dh_constant == "current" else dh.a_phi)
    return run


def fit_across_temperatures(session: Session, electrolytes: Sequence[str], model_id: str, temperatures: Any, *,
                            form: str = "reference-expansion", vary: Sequence[str] = (),
                            up_to: float | None = None, fix: Sequence[str] | dict[str, float] = (),
                            free: Sequence[str] = (), datasets: Sequence[str] | None = None,
                            on: str | Sequence[str] | None = None, set_name: str | None = None,
                            save: bool = True, dh_constant: str = "current",
                            cross_validation: str | None = None) -> FitRun:
    """Fit ``model_id`` to the stored data of ``electrolytes`` at ``temperatures`` (a range
    ``"LO:HI"`` or a set ``"T1,T2,..."`` in K, or a :class:`~saltbench.fitting.selection.TemperatureChoice`)
    with parameters as temperature form ``form`` (:func:`saltbench.fitting.temperature_fit.fit_temperatures`):
    ``vary`` names the parameters that take the form (default every free one), ``fix`` may hold
    coefficients (``beta0.c3=0``). The Debye-Hückel constants are those of water at each
    temperature (``dh_constant`` must be ``current``). ``cross_validation`` (``by-temperature``,
    ``interleaved`` or ``contiguous``) adds held-out errors (``FitRun.cross_validation``). With
    ``save``, the set carries the form, its coefficients and the data's temperature range, so
    ``predict --params SET --temperature T`` evaluates it at T."""
    from saltbench.errors import UserError
    from saltbench.fitting import parse_assignments
    from saltbench.fitting.crossval import ALL_SCHEMES
    from saltbench.fitting.selection import TemperatureChoice, parse_on, parse_temperatures
    from saltbench.fitting.temperature_fit import cross_validate_temperatures, fit_temperatures
    from saltbench.models.discovery import plugin_output_to_stderr
    from saltbench.scaffold.names import slug
    from saltbench.store.fitted import fit_set_id, save_fit

    choice = temperatures if isinstance(temperatures, TemperatureChoice) else parse_temperatures(str(temperatures))
    if str(dh_constant).strip().lower() != "current":
        raise UserError("--dh-constant: a fit across temperatures takes the constants of water at each "
                        "temperature ('current'); a published or given A_phi holds at one temperature only")
    if cross_validation is not None and cross_validation not in ALL_SCHEMES:
        raise UserError(f"--cross-validate: unknown scheme {cross_validation!r} (expected {', '.join(ALL_SCHEMES)})")
    model = session.registry.model(model_id)
    fixed = dict(fix) if isinstance(fix, dict) else parse_assignments(fix)
    props = parse_on(on or None, thermal=True) if on is None or isinstance(on, str) else list(on)
    datasets = list(datasets) if datasets else None
    sels = []
    for name in electrolytes:
        e = session.electrolyte(name)
        sels.append((e, select_data(session, e, datasets=datasets, on=props, up_to=up_to, temperatures=choice)))
    items = [(e, sel.data) for e, sel in sels]
    vary_list, free_list = list(vary) or None, list(free) or None
    with plugin_output_to_stderr():
        result = fit_temperatures(model, items, form=form, vary=vary_list, fixed=fixed, free=free_list)
        cv = cross_validate_temperatures(model, items, form=form, vary=vary_list, fixed=fixed, free=free_list,
                                         scheme=cross_validation) \
            if cross_validation is not None and result.temperature.reports else None
    summary = result.temperature
    names = [e.name for e, _ in sels]
    hashes = [d["content_hash"] for _, sel in sels for d in sel.datasets]
    settings = {"up_to": up_to, "fix": fixed, "free": list(free), "data": datasets, "on": props,
                "temperatures_k": summary.temperatures, "temperature_form": summary.form,
                "vary": list(vary), "a_phi": "water at each temperature"}
    run = FitRun(model, names, result, sels, _WaterAtEachTemperature(), settings, hashes)
    run.cross_validation = cv
    if save:
        set_id = slug(set_name) if set_name else fit_set_id(model.id, names, settings, hashes)
        if not set_id:
            raise UserError("--name must contain letters or digits")
        several = len(summary.temperatures) > 1
        run.parameter_set = save_fit(
            session.store, result, set_id=set_id, settings=settings, data_hashes=hashes, electrolytes=names,
            temperature_k=summary.reference_k if several else summary.temperatures[0],
            temperature_form=summary.form if several else None,
            temperature_range_k=(min(summary.temperatures), max(summary.temperatures)) if several else None,
            coefficients=_further_coefficients(result, names) if several else None)
    return run


@dataclass(frozen=True)
class _WaterAtEachTemperature:
    """The Debye-Hückel state of a fit across temperatures, as FitRun.dh reports it."""

    a_phi: float = float("nan")
    origin: str = "water at each temperature (IAPWS)"


def _further_coefficients(result, electrolytes: Sequence[str]) -> dict[tuple[str, str], dict[str, float]]:
    """(electrolyte, model parameter) -> the further coefficients of a fit across temperatures
    (``c1``...; the first is the parameter's stored value)."""
    values = result.values
    out: dict[tuple[str, str], dict[str, float]] = {}
    first = "c0"
    for e in electrolytes:
        for name, gname in result.param_map[e].items():
            base, dot, coefficient = gname.rpartition(".")
            if not dot or coefficient != first:
                continue
            further = {k.rpartition(".")[2]: v for k, v in values.items()
                       if k.rpartition(".")[0] == base and k != gname}
            if further:
                out[(e, name)] = further
    return out


def fit_constant(session: Session, model, electrolytes, temperature_k: float, choice: str):
    """The Debye-Hückel state a refit uses (``--dh-constant``): ``current`` (water at the
    temperature), ``published`` (the A_phi the model's published sets for these electrolytes
    state, which must agree) or a value; decided by :mod:`saltbench.water.basis`."""
    from saltbench.errors import UserError
    from saltbench.store import parameter_sets as ps
    from saltbench.water.basis import evaluation_basis, parse_constant

    try:
        constant = parse_constant(choice)
    except ValueError as exc:
        raise UserError(f"--dh-constant: {exc}") from None
    if constant != "published":
        return evaluation_basis(temperature_k, constant=constant).dh
    sets = [found[0] for e in electrolytes if (found := ps.published(session.store, model, e))]
    constants = {p.a_phi for p in sets if p.a_phi is not None}
    if len(constants) != 1:
        raise UserError(f"--dh-constant published: {model.id} has " + (
            "no published set with a stated A_phi for " if not constants else "published sets with different A_phi "
            "for ") + f"{', '.join(e.name for e in electrolytes)}; give a value, e.g. --dh-constant 0.392")
    pub = sets[0]
    return evaluation_basis(temperature_k, set_id=pub.set_id, set_a_phi=pub.a_phi,
                            set_temperature_k=pub.temperature_k).dh


def select_data(session: Session, electrolyte, *, datasets=None, on=None, up_to=None, temperature_k=298.15,
                temperatures=None):
    """The stored data of ``electrolyte`` a fit takes (:func:`saltbench.fitting.selection.select`):
    at ``temperature_k``, or at ``temperatures`` (a TemperatureChoice: a range or a set)."""
    from saltbench.fitting.selection import select

    e = session.electrolyte(electrolyte) if isinstance(electrolyte, str) else electrolyte
    points = queries.point_rows(session.store, e.name)
    if temperatures is not None:
        stored = sorted({round(float(r["temperature_k"]), 2) for r in points})
        if stored and not any(temperatures.holds(t) for t in stored):
            from saltbench.errors import UserError

            raise UserError(f"no data for {e.name} at {temperatures.label()}; its data are at "
                            f"{', '.join(f'{t:g}' for t in stored)} K")
        return select(points, queries.dataset_rows(session.store, e.name), e, datasets=datasets, on=on,
                      up_to=up_to, temperatures=temperatures)
    stored = sorted({round(float(r["temperature_k"]), 2) for r in points})
    if stored and all(abs(t - temperature_k) >= 0.05 for t in stored):
        from saltbench.errors import UserError

        # Say which temperatures there are: the bundled data are all at 25 °C, and a model is
        # judged only against data at the temperature asked.
        raise UserError(f"no data for {e.name} at {temperature_k:g} K; its data are at "
                        f"{', '.join(f'{t:g}' for t in stored)} K (add your own measurements at "
                        f"{temperature_k:g} K with 'saltbench data add', or use 'saltbench predict "
                        "--temperature', which warns that it extrapolates)")
    return select(points, queries.dataset_rows(session.store, e.name), e, datasets=datasets, on=on,
                  up_to=up_to, temperature_k=temperature_k)


def compare(session: Session, electrolytes, settings=None, *, jobs: int = 1, curves: bool = False,
            progress: bool = False, executor=None):
    """Compare models on each electrolyte; returns a :class:`saltbench.comparison.runner.Comparison`.

    The work per electrolyte runs in this process, in ``jobs`` worker processes of our own, or
    on ``executor``: any :class:`concurrent.futures.Executor`, such as a distributed engine's
    (``dask.distributed.Client(...).get_executor()``), for thousands of datasets or a bootstrap
    study. Its workers need saltbench and the same plugin files installed; they receive the
    data with each task and never open the store."""
    from saltbench.comparison.runner import run_comparison
    from saltbench.comparison.settings import CompareSettings

    settings = settings or CompareSettings()
    prepared = _prepare_comparison(session, electrolytes, settings)
    comp = run_comparison(prepared.tasks, settings, registry=session.registry, plugin_files=session._plugin_files,
                          disabled=session._disabled, jobs=jobs, curves=curves, progress=progress,
                          executor=executor)
    return prepared.finish(comp, settings)


@dataclass
class _PreparedComparison:
    """A comparison's tasks read from the store, and what it says beside the outcomes."""

    tasks: list
    skipped: dict[str, list[str]]
    per_ion: dict[str, list[str]]
    withheld: dict[str, dict[str, Any]]

    def finish(self, comp, settings):
        from saltbench.comparison.sources import source_disagreements

        comp.skipped = self.skipped
        comp.per_ion = self.per_ion
        comp.withheld = dict(self.withheld)
        for task in self.tasks:
            disagreeing = source_disagreements(task.data, settings.tolerances)
            if disagreeing:
                comp.disagreements[task.electrolyte.name] = disagreeing
        return comp


def _prepare_comparison(session: Session, electrolytes, settings) -> _PreparedComparison:
    from saltbench.comparison.assess import PublishedInput
    from saltbench.comparison.region import WithheldSet
    from saltbench.comparison.runner import ElectrolyteTask
    from saltbench.errors import UserError
    from saltbench.store import parameter_sets as ps

    reg = session.registry
    ids = list(settings.models) or list(reg.models)
    for mid in ids:
        reg.model(mid)  # unknown ids are a user error, before any work
    tasks, skipped, per_ion_models = [], {}, {}
    withheld: dict[str, dict[str, Any]] = {}
    for name in electrolytes:
        e = session.electrolyte(name)
        sel = select_data(session, e, datasets=settings.datasets or None, on=settings.on,
                          up_to=settings.up_to, temperature_k=settings.temperature_k)
        supported = [mid for mid in ids if reg.model(mid).supports(e)]
        skipped[e.name] = [mid for mid in ids if mid not in supported]
        # a model with parameters of its own per ion is determined only by several salts that
        # share an ion; fitted to one salt it is singular by design, not by the data
        per_ion = [mid for mid in supported if needs_several_salts(reg.model(mid), e)]
        supported = [mid for mid in supported if mid not in per_ion]
        if per_ion:
            per_ion_models[e.name] = per_ion
        if not supported:
            raise UserError(f"none of the chosen models can be judged on {e.name} ({e.charge_label}) alone"
                            + (f": {', '.join(per_ion)} need several salts sharing an ion (fit them jointly "
                               f"with 'saltbench fit {e.name} OTHER... --model ID')" if per_ion else ""))
        published: dict[str, PublishedInput | None] = {}
        # over a range of temperatures one set is chosen for all of them (the one whose ground
        # covers them best), and judged only where its authors fitted it unless asked otherwise
        over = (settings.temperature_k if settings.temperatures_k is None
                else _temperatures_of(session, e, settings))
        for mid in supported:
            found = preferred_sets(ps.published(session.store, reg.model(mid), e), over)
            if found and settings.temperatures_k is not None and not settings.published_beyond_range \
                    and temperature_rank(found[0], settings.temperature_k) >= 2:
                withheld.setdefault(e.name, {})[mid] = WithheldSet(found[0].set_id, found[0].temperature_k,
                                                                   found[0].temperature_range_k)
                published[mid] = None
            elif found:
                p = params_at(found[0], settings.temperature_k)
                published[mid] = PublishedInput(p.set_id, p.values, p.a_phi, p.from_memory, p.temperature_k,
                                                p.temperature_range_k)
            else:
                published[mid] = None
        top = float(sel.data.molality.max())
        target = min(settings.up_to, top) if settings.up_to else top
        tasks.append(ElectrolyteTask(e, sel.data, sel.datasets, published, supported, target))
    return _PreparedComparison(tasks, skipped, per_ion_models, withheld)


def _temperatures_of(session: Session, electrolyte, settings) -> list[float]:
    """The data temperatures (K) of ``electrolyte`` within ``settings.temperatures_k`` that hold
    points of the chosen datasets and properties up to ``settings.up_to``; a user error when
    there are none."""
    from saltbench.comparison.region import data_temperatures
    from saltbench.errors import UserError

    span = settings.temperatures_k
    rows = queries.point_rows(session.store, electrolyte.name)
    wanted = set(settings.datasets)
    chosen = [r for r in rows
              if (not wanted or wanted & {r["dataset"], r["source"], r["origin"]})
              and r["property"] in settings.on
              and (settings.up_to is None or r["molality"] <= settings.up_to * (1 + 1e-12))]
    temps = data_temperatures(chosen, *span)
    if temps:
        return temps
    stored = data_temperatures(rows, 0.0, float("inf"))
    if rows and not chosen:
        # nothing chosen at any temperature: the selection's own message says why (--data, --on)
        select_data(session, electrolyte, datasets=settings.datasets or None, on=settings.on,
                    up_to=settings.up_to, temperature_k=stored[0])
    where = data_temperatures(chosen, 0.0, float("inf"))
    raise UserError(f"no data for {electrolyte.name} between {span[0]:g} and {span[1]:g} K; its data "
                    f"{'chosen ' if len(where) != len(stored) else ''}are at "
                    f"{', '.join(f'{t:g}' for t in where) or 'no temperature'} K")


def compare_over_temperature(session: Session, electrolytes, settings, *, jobs: int = 1, curves: bool = False,
                             progress: bool = False, executor=None, across=None, skip_without_data: bool = False):
    """Compare models at every data temperature within ``settings.temperatures_k`` and assemble
    each model's region within tolerance in (temperature, molality); returns a
    :class:`saltbench.comparison.region.TemperatureComparison`.

    At each temperature the comparison is :func:`compare`'s, with one published set per model
    chosen for the whole range (:func:`preferred_sets` over the data temperatures) and left
    unjudged where its authors did not fit it (``settings.published_beyond_range`` judges it
    there too). ``across`` (a :class:`saltbench.comparison.region.AcrossTemperatureFit`) adds a
    third column per model: fitted once across every temperature, judged at each.
    ``skip_without_data`` (``compare --all``) leaves out, and lists, the electrolytes without
    data in the range instead of stopping at the first."""
    from saltbench.comparison.region import TemperatureComparison, assemble, judge_across, nearest
    from saltbench.comparison.runner import run_comparisons
    from saltbench.errors import UserError

    if settings is None or settings.temperatures_k is None:
        raise UserError("give a range of temperatures to compare over (--temperatures LO:HI)")
    if across is None and settings.across_form is not None:
        across = fit_across_temperatures_fn(settings.across_form)
    names = list(dict.fromkeys(session.electrolyte(n).name for n in electrolytes))
    temps: dict[str, list[float]] = {}
    without: list[str] = []
    for n in names:
        try:
            temps[n] = _temperatures_of(session, session.electrolyte(n), settings)
        except UserError:
            if not skip_without_data or n == names[-1] and not temps:
                raise
            without.append(n)
    names = [n for n in names if n in temps]
    every = sorted({t for ts in temps.values() for t in ts})
    # every temperature's tasks first, then all of them in one pool (run_comparisons)
    batches = []
    for t in every:
        at = replace(settings, temperature_k=t)
        batches.append((_prepare_comparison(session, [n for n in names if t in temps[n]], at), at))
    comps = run_comparisons([(prep.tasks, at) for prep, at in batches], registry=session.registry,
                            plugin_files=session._plugin_files, disabled=session._disabled, jobs=jobs,
                            curves=curves, progress=progress, executor=executor)
    comparisons = {t: prep.finish(comp, at) for t, (prep, at), comp in zip(every, batches, comps)}
    regions = {n: assemble(n, comparisons) for n in names}
    if across is not None:
        reg = session.registry
        for n, region in regions.items():
            e = session.electrolyte(n)
            data = {t: comparisons[t].data[n] for t in region.temperatures_k}
            for mid in list(dict.fromkeys(c.model for c in region.columns)):
                region.columns.append(judge_across(across, reg.model(mid), e, data, settings))
    return TemperatureComparison(settings, comparisons, regions, nearest(every, settings.temperature_k),
                                 without_data=without)


def fit_across_temperatures_fn(form: str):
    """The fit of :func:`compare_over_temperature`'s third column (a
    :class:`saltbench.comparison.region.AcrossTemperatureFit`): every free parameter of the model
    in the temperature form ``form``, fitted once to the points of every temperature
    (:func:`saltbench.fitting.temperature_fit.fit_temperatures`), its prediction at each point.
    A fit that fails (a model error, a form the data cannot carry) is a
    :class:`saltbench.errors.FitError`, which makes the column 'failed'."""
    from saltbench.errors import FitError, UserError
    from saltbench.fitting.temperature_fit import fit_temperatures
    from saltbench.models.temperature import form as form_named

    try:
        form_named(form)  # an unknown form is a mistake of the request, said at once
    except KeyError as exc:
        raise UserError(f"--fit-across: {exc.args[0]}") from None

    def fit_across(model, electrolyte, data, temperature_k):
        d = replace(data, temperature=np.asarray(temperature_k, dtype=float))
        result = fit_temperatures(model, [(electrolyte, d)], form=form)
        pred = np.asarray(result.prediction, dtype=float)
        if not result.converged or not np.isfinite(pred).all():
            raise FitError(f"the fit across temperatures did not converge ({result.message})")
        return pred

    return fit_across


def make_report(session: Session, electrolytes, settings=None, *, title: str | None = None,
                folder: str | os.PathLike[str] | None = None, command: str = "", argv: list[str] | None = None,
                jobs: int = 1, created: str | None = None, executor=None, across=None):
    """Compare, then write every report file into ``folder`` (default ``reports/<slug>``); returns
    a :class:`saltbench.report.writer.ReportResult`. ``executor`` as for :func:`compare`. With
    ``settings.temperatures_k`` the report adds the validity over temperature and molality
    (:func:`compare_over_temperature`, with ``across``) and details the comparison at the data
    temperature nearest ``settings.temperature_k``."""
    from saltbench.errors import UserError
    from saltbench.report.writer import write_report

    names = list(electrolytes)
    if not names:
        raise UserError("name at least one electrolyte")
    if settings is not None and settings.temperatures_k is not None:
        over = compare_over_temperature(session, names, settings, jobs=jobs, curves=True, executor=executor,
                                        across=across)
        return write_report(session, over.reference, title=title, folder=Path(folder) if folder else None,
                            command=command, argv=argv, created=created, region=over)
    comparison = compare(session, names, settings, jobs=jobs, curves=True, executor=executor)
    return write_report(session, comparison, title=title, folder=Path(folder) if folder else None,
                        command=command, argv=argv, created=created)


def rerun_report(session: Session, manifest_path: str | os.PathLike[str], *,
                 folder: str | os.PathLike[str] | None = None, jobs: int = 1, command: str = "",
                 argv: list[str] | None = None):
    """Re-run the report a manifest describes and say whether its results still agree."""
    from saltbench.report.manifest import check_agreement, load_manifest, settings_from

    manifest_path = Path(manifest_path)
    old = load_manifest(manifest_path)
    if folder is None:
        here = manifest_path.resolve().parent
        folder = here.parent / f"{here.name}-rerun"
    if old["command"].get("electrode"):
        from saltbench.report.electrode_writer import electrode_agreement

        c = old["command"]
        result = make_electrode_report(session, c["electrode"], c.get("convention") or "davies",
                                       model_id=c.get("model"), parameter_sets=c.get("sets") or (),
                                       candidates=c.get("candidates") or ELECTRODE_CANDIDATES,
                                       title=old["title"], folder=folder, command=command, argv=argv)
        result.agreement = electrode_agreement(old, result.manifest)
        return result
    settings = settings_from(old)
    if old["command"].get("mixture"):
        result = make_mixture_report(session, old["command"]["mixture"], settings,
                                     sets=old["command"].get("sets") or (), title=old["title"], folder=folder,
                                     command=command, argv=argv)
    else:
        result = make_report(session, old["command"]["electrolytes"], settings, title=old["title"],
                             folder=folder, command=command, argv=argv, jobs=jobs)
    result.agreement = check_agreement(old, result.manifest)
    return result


def needs_several_salts(model, electrolyte) -> bool:
    """Whether the model's free parameters belong to single ions (cation and anion alike)."""
    scopes = {p.scope for p in model.free_parameters(electrolyte)}
    return {"cation", "anion"} <= scopes


# -- raw readings, Gibbs-Duhem conversion of stored data, single-ion activities -----------------
# What the ``readings``, ``convert`` and ``ion-activity`` commands do. These glue the pure
# reductions of :mod:`saltbench.measurements` to the store and the model registry: a stored model
# and parameter set gives an isopiestic reference's osmotic coefficient and the MacInnes
# gamma±(KCl); the stored Kielland and SIT sets give ion sizes and interaction coefficients.

MACINNES_MODEL = "pitzer"
MACINNES_PARAMS = "pitzer-mayorga-1973"
ION_SIZE_SET = "kielland-1937"
SIT_SET = "sit-grenthe-1992"
CONVENTIONS = ("macinnes", "bates-guggenheim", "debye-huckel", "extended-debye-huckel", "davies",
               "truesdell-jones", "sit", "model")


def add_readings(session: Session, paths: Sequence[str | os.PathLike[str]]) -> IngestReport:
    """Load raw-readings files (and the bibliographies they cite, or folders of both) in one
    transaction; the store is unchanged on error."""
    from saltbench.store.measurements import add_readings as add

    return add(session.store, paths)


def measurement_sets(session: Session) -> pd.DataFrame:
    """One row per stored measurement set, with its reduction (if any) and whether it is current."""
    from saltbench.store.measurements import list_sets

    return list_sets(session.store)


def measurement_set(session: Session, key: str):
    """A stored measurement set (:class:`saltbench.curation.readings.MeasurementSet`, SI units)."""
    from saltbench.store.measurements import load_set

    return load_set(session.store, key)


def reduction_of(session: Session, key: str) -> dict | None:
    """The stored reduction of measurement set ``key`` (None if it was not reduced)."""
    from saltbench.store.measurements import reduction_of as stored

    return stored(session.store, key)


def emf_extrapolation(ms):
    """The standard-EMF extrapolation of an EMF measurement set (its plot data included)."""
    from saltbench.measurements.reduce import standard_emf_extrapolation

    return standard_emf_extrapolation(ms)


def model_function(session: Session, model_id: str, set_id: str, electrolyte,
                   what: str = "osmotic"):
    """phi(m) or gamma±(m) of ``electrolyte`` from a stored model and parameter set."""
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


def reduce_stored(session: Session, key: str, method: str | None = None):
    """Reduce the stored measurement set ``key`` and store (or replace) its reduced dataset;
    returns the :class:`saltbench.measurements.reduce.Reduction` and the dataset's key (if any)."""
    from saltbench.measurements.reduce import reduce_set
    from saltbench.store import measurements as store_ms

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
    kept = store_ms.ReducedValues(red.method, red.property, red.molality, red.value, red.u_value,
                                  red.note, red.details, red.background_molality, red.temperature_k)
    return red, store_ms.store_reduction(session.store, ms, kept)


def _reference_marks(session: Session, ms, reference, params) -> list[str]:
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


def measurement_keys(session: Session) -> list[str]:
    """The keys of every stored measurement set."""
    from saltbench.store.measurements import all_keys

    return all_keys(session.store)


# -- Gibbs-Duhem conversion of stored data ----------------------------------------------------

@dataclass
class Conversion:
    electrolyte: Any
    dataset: str
    direction: str
    result: GibbsDuhemResult


def convert_stored(session: Session, electrolyte: str, from_: str, dataset: str | None = None,
                   fit_points: int = 5) -> Conversion:
    """Convert a stored osmotic (or gamma±) dataset to the other property by Gibbs-Duhem."""
    from saltbench.errors import UserError
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

def parse_salts(session: Session, specs: Sequence[str]) -> list[tuple[Any, float]]:
    """``["NaCl=0.1", "KCl=0.05"]`` -> [(NaCl, 0.1), (KCl, 0.05)] (molality in mol/kg)."""
    from saltbench.chemistry.electrolyte import parse_formula
    from saltbench.errors import UserError

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


def _ion_values(session: Session, set_id: str, name: str) -> dict[str, float]:
    from saltbench.errors import UserError
    from saltbench.store.parameter_sets import ion_values

    values = ion_values(session.store, set_id, name)
    if not values:
        raise UserError(f"the store holds no parameter set {set_id!r} with ion values {name!r}")
    return values


def _set_note(session: Session, set_id: str) -> str:
    from saltbench.store.parameter_sets import typed_from_memory

    return f"parameter set {set_id}" + (" (typed from memory; verify)" if typed_from_memory(session.store, set_id)
                                        else "")


@dataclass
class IonActivity:
    result: Any  # saltbench.measurements.conventions.SingleIonResult
    sources: list[str]  # where each parameter came from
    notes: list[str]
    #: why the solution lies outside the model's ground (convention "model"; the CLI adds the
    #: convention's own ionic-strength limit for the others)
    extrapolation: list[str] = field(default_factory=list)


def ion_activity(session: Session, salts: Sequence[tuple[Any, float]], convention: str,
                 temperature_k: float = 298.15, *, b_ion: dict[str, float] | None = None,
                 missing: str = "error", model_id: str | None = None,
                 sets: Sequence[str] = ()) -> IonActivity:
    """Single-ion activity coefficients of ``salts`` under ``convention`` (see CONVENTIONS).

    ``"model"``: the single-ion form of the mixture model ``model_id`` (Pitzer, SIT, Bromley,
    Truesdell-Jones...), its parameters from the store as for :func:`predict_solution`
    (``sets`` first; ``missing`` "error" or "default"), with its extrapolation marks."""
    from saltbench.errors import UserError
    from saltbench.measurements import conventions as conv
    from saltbench.store.parameter_sets import electrolyte_values

    if convention not in CONVENTIONS:
        raise UserError(f"unknown convention {convention!r} (choose: {', '.join(CONVENTIONS)})")
    if convention == "model":
        return _model_ion_activity(session, salts, model_id, temperature_k, sets, missing)
    if model_id is not None:
        raise UserError("a model is named with the convention 'model' only")
    sources: list[str] = []
    notes: list[str] = []
    comp = list(salts)
    if convention == "bates-guggenheim":
        res = conv.bates_guggenheim(comp, temperature_k)
        sources.append("log10 gamma(Cl-) = -A sqrt(I)/(1 + 1.5 sqrt(I)), A from IAPWS water "
                       "properties at the given temperature")
        notes.append("the convention assigns gamma(Cl-) only; other ions are not defined by it")
    elif convention == "debye-huckel":
        model = session.registry.model("debye-huckel-limiting")
        res = conv.model_single_ion(comp, model, "Debye-Hückel limiting law", None, temperature_k)
    elif convention == "davies":
        model = session.registry.model("davies")
        res = conv.model_single_ion(comp, model, "Davies", None, temperature_k)
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
        stored = electrolyte_values(session.store, SIT_SET, "eps")
        if not stored:
            raise UserError(f"the store holds no SIT parameter set {SIT_SET!r}")
        eps = {}
        for target, value in stored.items():
            e = session.electrolyte(target)
            eps[(e.cation.name, e.anion.name)] = value
        sources.append(f"eps(i, k) from {_set_note(session, SIT_SET)}")
        res = _sit(session, comp, eps, temperature_k, missing)
        if res.parameters.get("taken_as_zero"):
            notes.append("eps taken as 0 for "
                         + ", ".join(cast("tuple[str, ...]", res.parameters["taken_as_zero"])))
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


def _model_ion_activity(session: Session, salts, model_id: str | None, temperature_k: float,
                        sets: Sequence[str], missing: str) -> IonActivity:
    from saltbench.chemistry.solution import Composition
    from saltbench.comparison.solutions import extrapolation_marks, resolve_values
    from saltbench.errors import UserError
    from saltbench.measurements import conventions as conv

    if model_id is None:
        raise UserError("the convention 'model' needs a model: --model ID (e.g. pitzer)")
    model = session.registry.model(model_id)
    if "ln_gamma" not in model.computes:
        raise UserError(f"model {model_id} gives no single-ion values")
    comp = Composition.of_salts(list(salts), temperature_k)
    if missing not in ("error", "default"):
        raise UserError("missing must be 'error' or 'default' with the convention 'model'")
    used: dict = {}
    res = resolve_values(model, comp, solution_lookup(session, list(sets), used, comp.temperature_k),
                         missing)  # type: ignore[arg-type]
    if res.absent:
        raise UserError(f"{model_id}: {res.refusal()}; give --sets, or --missing default to take "
                        "the model's defaults knowingly")
    result = conv.model_single_ion(list(salts), model, model.name, res.values, temperature_k)
    sources = [f"{model.id} parameters from {_set_note(session, s)}" for s in res.sets]
    notes = []
    if res.defaulted:
        notes.append(f"no set gives {', '.join(res.defaulted)}: the model's defaults were used "
                     "(--missing default); these values are guesses")
    if res.zero_mixing:
        notes.append(f"mixing terms taken as zero: {', '.join(res.zero_mixing)}")
    notes.append(f"convention: {model.single_ion_convention}")
    marks = list(extrapolation_marks(model, comp, res.found)[0])
    return IonActivity(result, sources, notes, marks)


def _sit(session: Session, salts: Sequence[tuple[Any, float]],
         epsilon: dict[tuple[str, str], float], temperature_k: float, missing: str) -> Any:
    """SIT single-ion values through the SIT model with ``epsilon[(cation, anion)]`` (kg/mol);
    pairs of opposite charge without a value are refused or, with ``missing="zero"``, taken as
    zero and listed."""
    from saltbench.errors import UserError
    from saltbench.measurements import conventions as conv
    from saltbench.models.contract import ParameterKey

    if missing not in ("error", "zero"):
        raise UserError("missing must be 'error' or 'zero'")
    ions, _ = conv.ion_molalities(salts)
    absent: list[str] = []
    params: dict[ParameterKey, float] = {}
    for n, ion in ions.items():
        for k, other in ions.items():
            if other.charge * ion.charge >= 0:
                continue
            cation, anion = (n, k) if ion.charge > 0 else (k, n)
            key = ParameterKey("eps", (cation, anion))
            if (cation, anion) in epsilon:
                params[key] = float(epsilon[(cation, anion)])
            elif f"{cation}/{anion}" not in absent:
                absent.append(f"{cation}/{anion}")
                params[key] = 0.0
    if absent and missing == "error":
        raise UserError(f"SIT needs epsilon for the ion pairs {', '.join(absent)} (kg/mol) and has "
                        "none for them; to take them as zero knowingly, use --missing zero "
                        "(missing='zero' in Python)")
    res = conv.model_single_ion(salts, session.registry.model("sit"), "SIT", params, temperature_k)
    res.parameters["taken_as_zero"] = tuple(absent)
    return res


def _mean_at_ionic_strength(session: Session, salt):
    """gamma±(salt) as a function of ionic strength, from the stored MacInnes model set."""
    e = session.electrolyte(salt.name)
    f, label, _ = model_function(session, MACINNES_MODEL, MACINNES_PARAMS, e, what="gamma")
    per = float(e.ionic_strength(1.0))
    return (lambda i: f(np.atleast_1d(i) / per).reshape(np.shape(i))), label, per


# -- solutions ---------------------------------------------------------------------------------
@dataclass
class SolutionPrediction:
    """Models on one described solution (scaled to one or more concentrations): ``record`` as
    read (closed if asked), ``factors`` (N,) the concentration factors of the rows of
    ``assessment.composition``, ``citations`` (set id -> citation) and ``from_memory`` (set ids
    typed from memory) for the sets used."""

    record: Any  # saltbench.chemistry.description.SolutionRecord
    factors: np.ndarray
    assessment: Any  # saltbench.comparison.solutions.SolutionAssessment
    citations: dict[str, str]
    from_memory: list[str]

    @property
    def composition(self):
        return self.assessment.composition


def read_solution(spec: str, *, temperature_k: float | None = None, density: str | None = None,
                  close_with: str | None = None):
    """A solution file, the inline form or a named reference (see DEVELOPERS.md, "Describing a
    solution"), its charge balance closed with ``close_with`` when asked."""
    from saltbench.curation.solutions import read_solution as read

    record = read(spec, temperature_k=temperature_k, density=density)
    return record.closed_with(close_with) if close_with else record


def _ordered_sets(session: Session, model, keys, chosen: Sequence[str], temperature_k=None):
    """The sets to look ``keys`` up in for ``model``: those of ``chosen`` that belong to it, in
    that order, then its published sets, those of the source that covers most keys first (one
    source's binary and mixing values were fitted together; among sources that cover as many,
    the one whose sets stand best at the solutions' temperatures, :func:`temperature_rank`),
    then the others by that rank and set id."""
    from saltbench.errors import UserError
    from saltbench.store import parameter_sets as ps

    store = session.store
    mine = [s for s in chosen if ps.set_model(store, s) == model.id]
    unknown = [s for s in chosen if ps.set_model(store, s) is None]
    if unknown:
        raise UserError(f"no parameter set {unknown[0]!r} in the store ('saltbench params list' shows them)")
    first_sets = ps.model_sets(store, model.id, mine) if mine else []
    infos = [i for i in ps.model_sets(store, model.id) if i.set_id not in mine]
    by_source: dict[str, list] = {}
    for info in infos:
        by_source.setdefault(info.source, []).append(info)
    cover = {src: len(ps.composition_values(store, model.id, [i.set_id for i in group], keys).values)
             for src, group in by_source.items()}
    rank = {src: min(temperature_rank(i, temperature_k) for i in group) for src, group in by_source.items()}
    best = max(cover, key=lambda src: (cover[src], -rank[src], src), default=None)
    first = by_source.get(best, []) if best is not None and cover[best] else []
    rest = sorted((i for i in infos if i not in first), key=lambda i: temperature_rank(i, temperature_k))
    return first_sets + first + rest


def solution_lookup(session: Session, chosen: Sequence[str], used: dict, temperature_k=298.15):
    """``lookup(model, keys)`` over the store's sets (``chosen`` first), ordered for the
    solutions' temperatures ``temperature_k`` (K, one or one per solution)."""
    from saltbench.comparison.solutions import Lookup
    from saltbench.store import parameter_sets as ps

    def lookup(model, keys):
        infos = _ordered_sets(session, model, keys, chosen, temperature_k)
        found = ps.composition_values(session.store, model.id, [i.set_id for i in infos], keys)
        used.update({i.set_id: i for i in infos if i.set_id in found.set_of.values()})
        fitted = {(i.set_id, salt): m for i in infos for salt, m in i.m_max.items()}
        return Lookup(dict(found.values), dict(found.set_of), list(found.missing), fitted,
                      {i.set_id: i.temperature_k for i in infos}, dict(found.coefficients),
                      {i.set_id: (i.temperature_form, i.temperature_range_k) for i in infos
                       if i.temperature_form is not None and i.temperature_range_k is not None})
    return lookup


def _models_for(session: Session, model_ids: Sequence[str], composition):
    reg = session.registry
    if list(model_ids) in ([], ["all"]):
        return [reg.model(mid) for mid in reg.models if reg.model(mid).supports_composition(composition)]
    return [reg.model(mid) for mid in model_ids]


def predict_solution(session: Session, spec: str, model_ids: Sequence[str] = ("all",), *,
                     sets: Sequence[str] = (), missing: str = "error",
                     ionic_strengths: Sequence[float] | None = None,
                     factors: Sequence[float] | None = None, close_with: str | None = None,
                     minerals: bool = False, temperature_k: float | None = None,
                     density: str | None = None) -> SolutionPrediction:
    """Every ion's ln gamma, ln gamma± of every salt the ions form, phi and a_w of a described
    solution from each model asked for (``["all"]``: every model that takes it), with the
    parameter sets looked up in the store (``sets`` first where given), scaled to
    ``ionic_strengths`` or by concentration ``factors``; ``minerals`` adds saturation indices
    from the bundled solubility products. See :mod:`saltbench.comparison.solutions`."""
    from saltbench.comparison.solutions import assess_solution
    from saltbench.errors import UserError

    record = read_solution(spec, temperature_k=temperature_k, density=density, close_with=close_with)
    if ionic_strengths is not None and factors is not None:
        raise UserError("scale by ionic strength or by concentration factor, not both")
    f = (record.factors_for_ionic_strength(ionic_strengths) if ionic_strengths is not None
         else np.asarray(factors if factors is not None else [1.0], dtype=float))
    composition = record.composition(f)
    models = _models_for(session, model_ids, composition)
    table: tuple = ()
    if minerals:
        from saltbench.curation.minerals import bundled_minerals

        table = bundled_minerals().minerals
    used: dict = {}
    assessment = assess_solution(composition, models,
                                 solution_lookup(session, list(sets), used, composition.temperature_k),
                                 missing=missing,  # type: ignore[arg-type]
                                 minerals=table)
    return SolutionPrediction(record, f, assessment, *_sets_used(session, used))


def _sets_used(session: Session, used: dict) -> tuple[dict[str, str], list[str]]:
    """For the sets a solution lookup used (set id -> SetInfo): each one's citation, and the ids
    of those typed from memory."""
    from saltbench.store import parameter_sets as ps

    citations = {}
    for set_id in used:
        doc = ps.load_set(session.store, set_id) or {}
        citations[set_id] = str(doc.get("citation") or doc.get("source") or "")
    return citations, [s for s, info in used.items() if info.from_memory]


@dataclass
class SolubilityRun:
    """Saturation molalities of one mineral in one background, per model."""

    mineral: Any  # saltbench.chemistry.minerals.Mineral
    background: Any  # SolutionRecord, or None for pure water
    results: list  # saltbench.comparison.solubility.Solubility, one per model
    citations: dict[str, str]
    from_memory: list[str]
    cautions: tuple[str, ...]


def solubility(session: Session, mineral: str, model_ids: Sequence[str] = ("all",), *,
               spec: str | None = None, sets: Sequence[str] = (), missing: str = "error",
               temperature_k: float | None = None, density: str | None = None) -> SolubilityRun:
    """The molality of ``mineral`` (a name, mineral name or formula of the bundled solubility
    products) at saturation in pure water or in the solution ``spec``, per model (``["all"]``:
    every model that takes the solution and gives single-ion values)."""
    from saltbench.chemistry.minerals import NO_SPECIATION, SCALING_CAUTION
    from saltbench.chemistry.solution import Composition
    from saltbench.comparison.solubility import saturation_molality
    from saltbench.curation.minerals import bundled_minerals

    table = bundled_minerals()
    target = table.find(mineral)
    record = None
    if spec is not None:
        record = read_solution(spec, temperature_k=temperature_k, density=density)
        background = record.composition()
    else:
        first_ion = target.ions[0][0]
        # pure water: the mineral's own ions at zero
        background = Composition((first_ion,), np.zeros((1, 1)),
                                 np.array([temperature_k or target.temperature_k]))
    # the models that take the background with the mineral's ions in it
    ions = tuple(dict.fromkeys([*background.ions, *(i for i, _ in target.ions)]))
    probe = Composition(ions, np.ones((1, len(ions))), background.temperature_k[:1])
    models = [m for m in _models_for(session, model_ids, probe)
              if list(model_ids) not in ([], ["all"]) or "ln_gamma" in m.computes]
    used: dict = {}
    lookup = solution_lookup(session, list(sets), used, background.temperature_k)
    results = [saturation_molality(m, background, target, lookup, missing=missing) for m in models]
    cautions = [SCALING_CAUTION] + ([NO_SPECIATION] if target.pairs_strongly else [])
    if record is not None:
        cautions += list(record.cautions)
    return SolubilityRun(target, record, results, *_sets_used(session, used), tuple(cautions))

# -- mixture datasets (issue 19, item 3) ------------------------------------------------------
def mixture_datasets(session: Session, system: str | None = None):
    """The stored mixture datasets (of ``system``, e.g. 'HCl + NaCl', salts in any order) as
    :class:`saltbench.store.mixtures.MixtureDatasetRow` values."""
    from saltbench.store.mixtures import mixture_dataset_rows

    return mixture_dataset_rows(session.store, system)


def mixture_points(session: Session, key_or_system: str):
    """The points of one mixture dataset (by key) or of every dataset of a system, as a list of
    :class:`saltbench.curation.mixture_points.MixturePoints` whose ``quantity`` is a
    :class:`saltbench.models.quantities.Quantity`. Raises UserError when there is none."""
    from saltbench.models.quantities import Quantity
    from saltbench.store.mixtures import mixture_points as stored

    return [replace(p, quantity=Quantity(*p.quantity)) for p in stored(session.store, key_or_system)]


def is_mixture(session: Session, key_or_system: str) -> bool:
    """Whether ``key_or_system`` names a stored mixture dataset or a system of one."""
    from saltbench.store.mixtures import has_mixture

    return has_mixture(session.store, key_or_system)


def check_mixtures(session: Session, names: Sequence[str] = ()):
    """The mixture checks (``saltbench.curation.mixture_checks``) over every stored mixture
    dataset, or those of the named datasets or systems."""
    from saltbench.curation.mixture_checks import check_mixture_points
    from saltbench.store.mixtures import mixture_point_rows

    if not names:
        return check_mixture_points(mixture_point_rows(session.store))
    chosen = {}
    for name in names:
        if not is_mixture(session, name):
            mixture_points(session, name)  # raises the UserError naming it and the known systems
        for p in mixture_point_rows(session.store, name):
            chosen[(p.key, p.line, p.molality)] = p
    return check_mixture_points(list(chosen.values()))


def check_data_and_mixtures(session: Session, names: Sequence[str] = ()):
    """``data check``: the one-salt checks for the named electrolytes and the mixture checks for
    the named mixture datasets or systems; with no names, every electrolyte and every mixture."""
    from saltbench.curation.checks import CheckReport
    from saltbench.store.mixtures import mixture_dataset_rows

    mixtures = [n for n in names if is_mixture(session, n)]
    salts = [n for n in names if n not in mixtures]
    report = check_data(session, salts) if salts or not names else CheckReport()
    if mixtures or (not names and mixture_dataset_rows(session.store)):
        part = check_mixtures(session, mixtures)
        report.findings += part.findings
        report.summary += part.summary
    return report


# -- mixture data: fit and compare -------------------------------------------------------------
def mixture_data(session: Session, key_or_system: str, *, on: Sequence[str] = (), datasets: Sequence[str] = ()):
    """Every point of one mixture dataset (by key) or of a system's datasets, as one
    :class:`saltbench.fitting.MixtureData` (ions in a common order), with the datasets' keys;
    ``on`` and ``datasets`` choose among them as for one salt
    (:func:`saltbench.curation.mixture_points.select_mixture_points`)."""
    from saltbench.chemistry.solution import Composition
    from saltbench.curation.mixture_points import select_mixture_points
    from saltbench.fitting import MixtureData
    from saltbench.models.quantities import Quantity

    parts = select_mixture_points(mixture_points(session, key_or_system), key_or_system,
                                  on=tuple(on), datasets=tuple(datasets))
    ions: dict[str, Any] = {}
    for p in parts:
        for ion in p.composition.ions:
            ions.setdefault(ion.name, ion)
    names = list(ions)
    rows, temps, quantities, values, uncs, labels = [], [], [], [], [], []
    salts: dict[str, Any] = {}
    for p in parts:
        m = np.zeros((p.n, len(names)))
        for j, name in enumerate(p.composition.names):
            m[:, names.index(name)] = p.composition.molality[:, j]
        rows.append(m)
        temps.append(np.full(p.n, p.temperature_k))
        quantities += [Quantity(*p.quantity)] * p.n
        values.append(p.values)
        uncs.append(p.uncertainties)
        labels += [p.key] * p.n
        for salt in p.composition.salts:
            salts.setdefault(salt.name, salt)
    comp = Composition(tuple(ions.values()), np.vstack(rows), np.concatenate(temps),
                       salts=tuple(salts.values()))
    data = MixtureData(comp, quantities, np.concatenate(values), np.concatenate(uncs),
                       np.array(labels, dtype=object))
    return data, [p.key for p in parts]


def compare_mixture(session: Session, key_or_system: str, settings=None, *, sets: Sequence[str] = (),
                    missing: str = "error"):
    """Each mixture model judged on a system's mixture data (see
    :mod:`saltbench.comparison.mixtures`); returns a ``MixtureComparison``."""
    from saltbench.comparison.mixtures import compare_mixtures
    from saltbench.comparison.settings import CompareSettings

    settings = settings or CompareSettings()
    data, keys = mixture_data(session, key_or_system, on=settings.on, datasets=settings.datasets)
    reg = session.registry
    ids = list(settings.models) or [mid for mid in reg.models
                                    if reg.model(mid).supports_composition(data.composition)]
    models = [(reg.model(mid), reg.models[mid].plugin) for mid in ids]
    used: dict = {}
    lookup = solution_lookup(session, list(sets), used, data.composition.temperature_k)
    name = key_or_system if len(keys) > 1 or key_or_system not in keys else \
        " + ".join(s.name for s in data.composition.salts)
    out = compare_mixtures(name, data, models, lookup, settings, missing=missing)
    memory = [s for s, info in used.items() if info.from_memory]
    for o in out.outcomes:
        o.published_from_memory = any(s in memory for s in (o.published_set or "").split(", "))
    return out


def fit_mixture_data(session: Session, key_or_system: str, model_id: str, *, free: Sequence[str] | None = None,
                     sets: Sequence[str] = (), missing: str = "error", on: Sequence[str] = (),
                     datasets: Sequence[str] = ()):
    """Fit ``model_id``'s mixing terms (or the keys in ``free``) to a system's mixture data (those
    ``on`` and ``datasets`` choose, see :func:`mixture_data`) with the other parameters held at
    the store's sets (the rules of ``predict --solution``)."""
    from saltbench.comparison.solutions import resolve_values
    from saltbench.errors import UserError
    from saltbench.fitting import fit_mixture

    data, keys = mixture_data(session, key_or_system, on=on, datasets=datasets)
    model = session.registry.model(model_id)
    if not model.supports_composition(data.composition):
        raise UserError(f"model {model_id} does not take these mixtures (one salt at a time)")
    used: dict = {}
    res = resolve_values(model, data.composition,
                         solution_lookup(session, list(sets), used, data.composition.temperature_k), missing)  # type: ignore[arg-type]
    if res.absent:
        raise UserError(f"{model_id}: {res.refusal()}; give --sets, or --missing default")
    freed = list(free) if free else None
    held: dict[Any, float] = {k: v for k, v in res.values.items() if freed is None or str(k) not in freed}
    if freed is None:
        from saltbench.comparison.solutions import MIXING_KINDS

        declared = model.keys_for(data.composition)
        held = {k: v for k, v in held.items() if declared[k].owner_kind not in MIXING_KINDS}
    result = fit_mixture(model, data, held=held, free=freed)
    return result, res, keys


def save_mixture_fit(session: Session, result, model_id: str, key_or_system: str, *,
                     set_name: str | None = None, sets: Sequence[str] = (),
                     keys: Sequence[str] | None = None) -> str:
    """Save the free keys of a mixture fit (``fit_mixture_data``) as a fitted parameter set of
    ion-group rows, found by ``--sets`` (or the published sets' lookup) like a published one;
    ``keys`` are the datasets the fit used (``fit_mixture_data``'s third value; default: every
    dataset of the system)."""
    import hashlib

    from saltbench.curation.parameters import ion_group
    from saltbench.store.fitted import save_mixing_fit
    from saltbench.store.mixtures import mixture_dataset_rows

    free = [p for p in result.parameters if not p.get("fixed")]
    values = []
    for p in free:
        name, _, owner = p["name"].partition("[")
        values.append((name, "/".join(ion_group(owner.rstrip("]"))), float(p["value"]), p.get("stderr")))
    hashes = [r.content_hash for r in mixture_dataset_rows(session.store, None)
              if (r.key in keys if keys is not None else (r.key == key_or_system or r.system == result.electrolyte))]
    digest = hashlib.sha256(repr((model_id, key_or_system, sorted(hashes), list(sets))).encode()).hexdigest()[:8]
    slug = "".join(ch if ch.isalnum() else "-" for ch in result.electrolyte.lower()).strip("-")
    set_id = set_name or f"fit-{model_id}-{'-'.join(x for x in slug.split('-') if x)}-{digest}"
    names = [p["name"] for p in free]
    cov = (names, [[float(x) for x in row] for row in result.covariance]) if names else None
    return save_mixing_fit(session.store, set_id=set_id, model=model_id, values=values, covariance=cov,
                           settings={"system": key_or_system, "sets": list(sets), "mixture": True},
                           data_hashes=hashes, temperature_k=float(result.temperature_k),
                           max_ionic_strength=float(max(result.molality)))


def make_mixture_report(session: Session, key_or_system: str, settings=None, *, sets: Sequence[str] = (),
                        title: str | None = None, folder: str | os.PathLike[str] | None = None,
                        command: str = "", argv: list[str] | None = None, created: str | None = None):
    """Judge the models on a system's mixture data (:func:`compare_mixture`), then write every
    report file into ``folder`` (default ``reports/<slug>``); returns a
    :class:`saltbench.report.writer.ReportResult` whose ``comparison`` is the
    ``MixtureComparison``. A system without mixture data is a UserError before anything is written."""
    from saltbench.comparison.settings import CompareSettings
    from saltbench.report.mixture_view import HeldSet, MixtureView
    from saltbench.report.mixture_writer import write_mixture_report
    from saltbench.store import parameter_sets as ps
    from saltbench.store.mixtures import mixture_dataset_rows

    settings = settings or CompareSettings()
    data, keys = mixture_data(session, key_or_system, on=settings.on, datasets=settings.datasets)
    comparison = compare_mixture(session, key_or_system, settings, sets=sets)
    rows: dict[str, Any] = {}
    for r in mixture_dataset_rows(session.store, None):  # a user's dataset before a bundled one of its key
        if r.key not in rows or r.origin == "user":
            rows[r.key] = r
    held = []
    for o in comparison.outcomes:
        ids = [x for x in (o.published_set or "").split(", ") if x]
        for info in (ps.model_sets(session.store, o.model, ids) if ids else []):
            held.append(HeldSet(o.model, info.set_id, info.source, info.from_memory))
    view = MixtureView(comparison, data, [rows[k] for k in keys if k in rows], held, list(sets), key_or_system)
    return write_mixture_report(session, view, title=title, folder=Path(folder) if folder else None,
                                command=command, argv=argv, created=created)


# -- electrode calibrations ---------------------------------------------------------------------
#: Conventions a calibration's standards may be put on (those of :func:`ion_activity`).
ELECTRODE_CONVENTIONS = CONVENTIONS
#: The candidate conventions whose spread makes the activity-coefficient part of a sample's
#: concentration budget, when none are named.
ELECTRODE_CANDIDATES = ("davies", "extended-debye-huckel", "sit")


@dataclass
class StandardActivity:
    """One calibration row (a standard, or a separate solution of interferents) on a convention:
    its whole composition (background included), ionic strength, and the primary ion's and the
    interferents' single-ion activities."""

    line: int
    role: str
    label: str
    salts: list[tuple[str, float]]  # salt, mol/kg
    ionic_strength: float
    molality: float  # of the primary ion, mol/kg (0 in a separate solution)
    gamma: float  # of the primary ion (NaN in a separate solution)
    activity: float  # a_i
    interferents: dict[str, float]  # a_j of each declared interferent
    emf: float  # V
    u_emf: float  # V

    @property
    def px(self) -> float:
        return float(-np.log10(self.activity)) if self.activity > 0 else float("nan")


@dataclass
class ElectrodeCalibration:
    """An ion-selective electrode calibration: the set as read, its standards' activities on
    ``convention`` (with ``caveat``), the Nikolsky-Eisenman fit (``fit``:
    :class:`saltbench.measurements.electrode_response.ResponseFit`) and every selectivity
    coefficient (:class:`saltbench.measurements.electrode_selectivity.Selectivity`), fitted,
    by the fixed-interference and by the separate-solution method."""

    set: Any  # saltbench.curation.electrode_readings.ElectrodeSet
    convention: str  # as asked: a convention name, or "model"
    convention_label: str  # as the results name it (e.g. "Davies", "Pitzer")
    model_id: str | None
    standards: list[StandardActivity]
    separate: list[StandardActivity]
    fit: Any  # ResponseFit
    selectivity: list[Any]  # Selectivity
    sources: list[str]
    notes: list[str]
    extrapolation: list[str]
    caveat: str
    cautions: list[str]


def electrode_set(session: Session, key_or_file: Any):
    """An electrode or pH-buffer set: read from ``key_or_file`` when it is a file (not stored; its
    citation key is not checked), else the stored set of that id (an ElectrodeSet passes through)."""
    from saltbench.curation.electrode_readings import ElectrodeSet, read_electrode_readings
    from saltbench.store.electrode import load_set

    if isinstance(key_or_file, ElectrodeSet):
        return key_or_file
    try:
        is_file = Path(key_or_file).is_file()
    except OSError:
        is_file = False
    if is_file or key_or_file.lower().endswith(".csv"):
        return read_electrode_readings(key_or_file)
    return load_set(session.store, key_or_file)


def electrode_sets(session: Session) -> list[dict]:
    """One record per stored electrode or pH-buffer set."""
    from saltbench.store.electrode import list_sets

    return list_sets(session.store)


def _row_activity(session: Session, es, row, convention: str, model_id: str | None,
                  sets: Sequence[str], missing: str, extra: Sequence[tuple[Any, float]] = ()):
    """The row's composition (with ``extra`` salts added) and its IonActivity on the convention."""
    comp: dict[str, list] = {}
    for e, m in (*es.composition(row), *extra):
        if e.name in comp:
            comp[e.name][1] += m
        else:
            comp[e.name] = [e, m]
    salts = [(e, float(m)) for e, m in comp.values() if m > 0]
    if not salts:
        return salts, None
    kw: dict[str, Any] = {"missing": missing}
    if convention == "model":
        kw.update(model_id=model_id, sets=list(sets))
    return salts, ion_activity(session, salts, convention, row.temperature_k, **kw)


def _activity_of(result, ion: str, salts: Sequence[tuple[Any, float]] = ()) -> float:
    """a of ``ion`` in a convention's result: 0 when the solution (``salts``, or the result's
    own ions) does not hold it; an ion it holds but the convention gives no value for is refused
    (e.g. NO3- under Bates-Guggenheim, which assigns Cl- only)."""
    present = ({n for e, _ in salts for n in (e.cation.name, e.anion.name)} if salts
               else set(result.molalities))
    if ion not in present:
        return 0.0
    gamma = float(np.asarray(result.gamma(ion)).reshape(-1)[0])
    return float(np.asarray(result.molalities[ion]).reshape(-1)[0]) * gamma


def _standards(session: Session, es, convention: str, model_id: str | None, sets: Sequence[str],
               missing: str):
    from saltbench.measurements.conventions import CONVENTION_MAX_I

    out: dict[str, list[StandardActivity]] = {"standard": [], "separate": []}
    sources: list[str] = []
    notes: list[str] = []
    marks: list[str] = []
    label = convention
    i_max = CONVENTION_MAX_I.get(convention)
    for row in es.rows:
        if row.role not in out:
            continue
        salts, act = _row_activity(session, es, row, convention, model_id, sets, missing)
        assert act is not None  # a standard holds the primary ion; a separate solution an interferent
        r = act.result
        label = r.convention
        sources += [s for s in act.sources if s not in sources]
        notes += [n for n in act.notes if n not in notes]
        i_now = float(np.asarray(r.ionic_strength).reshape(-1)[0])
        why = list(act.extrapolation)
        if i_max is not None and i_now > i_max * (1 + 1e-9):
            why.append(f"I = {i_now:.4g} mol/kg is beyond the {i_max:g} mol/kg to which the "
                       f"{convention} form is commonly held to work")
        marks += [f"line {row.line}: {w}" for w in why]
        ion = es.ion.name
        a_i = _activity_of(r, ion, salts)
        m_i = float(np.asarray(r.molalities[ion]).reshape(-1)[0]) if a_i > 0 else 0.0
        out[row.role].append(StandardActivity(
            row.line, row.role, row.label, [(e.name, m) for e, m in salts], i_now, m_i,
            a_i / m_i if m_i > 0 else float("nan"), a_i,
            {j.name: _activity_of(r, j.name, salts) for j in es.interferents}, row.emf, row.u_emf))
    return out, label, sources, notes, marks


def _response_data(es, rows: Sequence[StandardActivity], interferents: Sequence[str] | None = None):
    from saltbench.measurements.electrode_response import ResponseData

    names = [j.name for j in es.interferents] if interferents is None else list(interferents)
    return ResponseData(
        np.array([r.activity for r in rows]), np.array([r.emf for r in rows]),
        np.array([r.u_emf for r in rows]), es.ion.charge, es.temperature_k,
        {n: np.array([r.interferents[n] for r in rows]) for n in names},
        {j.name: j.charge for j in es.interferents if j.name in names})


def _fixed_interference(es, standards: list[StandardActivity]) -> tuple[list, list[str]]:
    """FIM coefficients: for each interferent, each series of at least 4 standards holding it at
    one molality (of the salt that carries it), fitted on its own with the interference lumped
    into the low-level term."""
    from saltbench.errors import SaltbenchError
    from saltbench.measurements.electrode_response import fit_response
    from saltbench.measurements.electrode_selectivity import fixed_interference

    out, notes = [], []
    for j in es.interferents:
        series: dict[tuple, list[StandardActivity]] = {}
        for r in standards:
            if r.interferents[j.name] <= 0:
                continue
            key = tuple(sorted((n, m) for n, m in r.salts
                               if j.name in _ions_of(n) and es.ion.name not in _ions_of(n)))
            series.setdefault(key, []).append(r)
        for key, rows in series.items():
            if len(rows) < 4:
                notes.append(f"fixed-interference series of {j.name} ({_salts_text(key)}) has "
                             f"{len(rows)} standards; at least 4 are needed")
                continue
            try:
                sub = fit_response(_response_data(es, rows, interferents=[]))
            except SaltbenchError as exc:
                notes.append(f"fixed-interference series of {j.name}: {exc}")
                continue
            if sub.detection_limit is None or not sub.a0_resolved:
                notes.append(f"fixed-interference series of {j.name} ({_salts_text(key)}): no "
                             "low-activity asymptote in its standards")
                continue
            a_j = float(np.median([r.interferents[j.name] for r in rows]))
            assert sub.u_detection_limit is not None
            out.append(fixed_interference(sub.detection_limit, sub.u_detection_limit, a_j,
                                          es.ion.charge, j.charge, j.name))
    return out, notes


def _ions_of(salt: str) -> tuple[str, str]:
    from saltbench.chemistry.electrolyte import parse_formula

    e = parse_formula(salt)
    return e.cation.name, e.anion.name


def _salts_text(salts) -> str:
    return ", ".join(f"{n} {m:g} mol/kg" for n, m in salts) or "background only"


def electrode_calibrate(session: Session, key_or_file: Any, convention: str = "davies", *,
                        model_id: str | None = None, sets: Sequence[str] = (),
                        missing: str = "error") -> ElectrodeCalibration:
    """Put a calibration's standards on ``convention`` (any of :data:`ELECTRODE_CONVENTIONS`;
    ``"model"`` with ``model_id``: that model's single-ion form, parameters from the store, as
    :func:`ion_activity`), fit the Nikolsky-Eisenman response, and give the selectivity
    coefficients by every method the readings allow."""
    from saltbench.errors import UserError
    from saltbench.measurements.conventions import SINGLE_ION_CAVEAT
    from saltbench.measurements.electrode_response import fit_response
    from saltbench.measurements.electrode_selectivity import FITTED, Selectivity, separate_solution_from_fit
    from saltbench.measurements.nernst import CALIBRATION_CAUTION

    es = electrode_set(session, key_or_file)
    if es.kind != "electrode":
        raise UserError(f"{es.key} is a {es.kind} set: calibrate it with 'saltbench electrode ph'")
    rows, label, sources, notes, marks = _standards(session, es, convention, model_id, sets, missing)
    fit = fit_response(_response_data(es, rows["standard"]))
    selectivity: list[Any] = []
    for j in fit.fitted_interferents:
        k = fit.selectivity(j)
        u_log = fit.u(f"log10_K({j})")
        selectivity.append(Selectivity(j, FITTED, k, k * float(np.log(10.0)) * u_log, None))
    fim, fim_notes = _fixed_interference(es, rows["standard"])
    selectivity += fim
    notes += fim_notes
    for r in rows["separate"]:
        present = [j for j in es.interferents if r.interferents[j.name] > 0]
        if len(present) != 1:
            notes.append(f"line {r.line}: a separate solution must hold exactly one interferent "
                         f"for the separate-solution method (it holds {len(present)})")
            continue
        j = present[0]
        selectivity.append(separate_solution_from_fit(fit, r.emf, r.u_emf, r.interferents[j.name],
                                                      j.charge, j.name))
    return ElectrodeCalibration(es, convention, label, model_id, rows["standard"], rows["separate"],
                                fit, selectivity, sources, notes, marks, SINGLE_ION_CAVEAT,
                                [CALIBRATION_CAUTION])


@dataclass
class ElectrodeSample:
    """One sample's result: its primary-ion activity (``activity``:
    :class:`saltbench.measurements.electrode_sample.SampleActivity`, with budget and flags) and,
    when its composition or the background is known, its molality (``concentration``:
    :class:`saltbench.measurements.electrode_sample.Concentration`)."""

    line: int
    label: str
    salts: list[tuple[str, float]]  # the known part of its composition (background included)
    interferents: dict[str, float]  # a_j on the calibration's convention
    activity: Any
    concentration: Any | None
    ionic_strength: float | None
    notes: list[str]


def _solve_molality(session: Session, es, row, a_i: float, convention: str, model_id, sets,
                    missing) -> tuple[float, float, float]:
    """The primary ion's molality m with m gamma_i(m) = a_i, the primary salt added to the
    sample's known composition (fixed-point iteration; gamma_i varies slowly with m)."""
    from saltbench.errors import UserError

    salt = es.primary_salt
    nu = salt.nu_cation if es.ion.name == salt.cation.name else salt.nu_anion
    m = a_i
    for _ in range(100):
        _, act = _row_activity(session, es, row, convention, model_id, sets, missing,
                               extra=[(salt, m / nu)])
        gamma = float(np.asarray(act.result.gamma(es.ion.name)).reshape(-1)[0])
        new = a_i / gamma
        if abs(new - m) <= 1e-12 * new:
            i_now = float(np.asarray(act.result.ionic_strength).reshape(-1)[0])
            return new, gamma, i_now
        m = new
    raise UserError("the sample's molality did not settle (activity coefficient iteration)")


def electrode_samples(session: Session, cal: ElectrodeCalibration, *,
                      candidates: Sequence[str] = ELECTRODE_CANDIDATES) -> list[ElectrodeSample]:
    """Every sample of ``cal``'s set: its activity on the calibration's convention and, when the
    sample's composition (or the background) is known, its molality, with the spread over the
    ``candidates`` conventions (each recalibrated and re-solved) in the budget."""
    from saltbench.errors import SaltbenchError
    from saltbench.measurements.electrode_sample import combine, sample_activity

    es = cal.set
    extra_k: dict[str, list[float]] = {}
    for s in cal.selectivity:
        if s.interferent not in cal.fit.fitted_interferents:
            extra_k.setdefault(s.interferent, []).append(s.log10_coefficient)
    # K of an interferent the fit did not give: the mean log10 K of its other methods
    extra = {j: float(10.0 ** np.mean(v)) for j, v in extra_k.items()}
    others: dict[str, Any] = {}
    out = []
    for row in es.of_role("sample"):
        if row.ionic_strength is not None:
            out.append(_sample_at_ionic_strength(session, cal, row, extra, candidates, others))
            continue
        notes: list[str] = []
        salts, act = _row_activity(session, es, row, cal.convention, cal.model_id, (), "error")
        levels = {j.name: _activity_of(act.result, j.name, salts) for j in es.interferents} if act else {}
        res = sample_activity(cal.fit, row.emf, row.u_emf, interferents=levels, selectivity=extra,
                              temperature_k=row.temperature_k, u_temperature_k=es.u_temperature_k)
        conc = None
        i_s = None
        if res.activity is not None and salts:
            m, gamma, i_s = _solve_molality(session, es, row, res.activity, cal.convention,
                                            cal.model_id, (), "error")
            by_model: dict[str, float] = {cal.convention_label: m}
            refused: dict[str, str] = {}
            for c in candidates:
                if c == cal.convention and cal.model_id is None:
                    continue
                try:
                    if c not in others:
                        others[c] = electrode_calibrate(session, es, c)
                    oc = others[c]
                    _, act_c = _row_activity(session, es, row, c, None, (), "error")
                    lv = ({j.name: _activity_of(act_c.result, j.name, salts) for j in es.interferents}
                          if act_c else {})
                    rc = sample_activity(oc.fit, row.emf, row.u_emf, interferents=lv, selectivity=extra,
                                         temperature_k=row.temperature_k)
                    if rc.activity is None:
                        refused[c] = "no activity on this calibration"
                        continue
                    by_model[oc.convention_label] = _solve_molality(session, es, row, rc.activity, c,
                                                                    None, (), "error")[0]
                except SaltbenchError as exc:
                    refused[c] = str(exc)
            conc = combine(res, m, gamma, by_model, refused)
        elif res.activity is not None:
            notes.append("no composition and no background: the activity only (give the sample's "
                         "other components, or the adjuster as the header's background)")
        out.append(ElectrodeSample(row.line, row.label, [(e.name, m_) for e, m_ in salts], levels,
                                   res, conc, i_s, notes))
    return out


#: Conventions whose gamma_i depends only on the ionic strength and the ion itself, so that a
#: sample known only by its ionic strength can be put on them.
IONIC_STRENGTH_ONLY = ("davies", "debye-huckel", "extended-debye-huckel", "truesdell-jones",
                       "bates-guggenheim")


def _gamma_at_ionic_strength(session: Session, es, ionic_strength: float, temperature_k: float,
                             convention: str) -> float:
    """gamma_i of the primary ion at ``ionic_strength`` under a convention that depends on I alone
    (evaluated in a solution of the primary salt at that ionic strength)."""
    from saltbench.errors import UserError

    if convention not in IONIC_STRENGTH_ONLY:
        raise UserError(f"the {convention} convention needs the sample's salts, not its ionic "
                        f"strength alone (conventions of I alone: {', '.join(IONIC_STRENGTH_ONLY)})")
    salt = es.primary_salt
    x = ionic_strength / float(salt.ionic_strength(1.0))
    act = ion_activity(session, [(salt, x)], convention, temperature_k)
    return float(np.asarray(act.result.gamma(es.ion.name)).reshape(-1)[0])


def _sample_at_ionic_strength(session: Session, cal: ElectrodeCalibration, row, extra, candidates,
                              others) -> ElectrodeSample:
    """A sample known only by its ionic strength: its activity (interferents uncorrected) and
    m_i = a_i / gamma_i(I) on each convention of I alone."""
    from saltbench.errors import SaltbenchError
    from saltbench.measurements.electrode_sample import combine, sample_activity

    es = cal.set
    notes = ["known by its ionic strength only"]
    if es.interferents:
        notes.append("its interferent levels are not known: their interference is not corrected")
    res = sample_activity(cal.fit, row.emf, row.u_emf, selectivity=extra,
                          temperature_k=row.temperature_k, u_temperature_k=es.u_temperature_k)
    conc = None
    if res.activity is not None:
        try:
            gamma = _gamma_at_ionic_strength(session, es, row.ionic_strength, row.temperature_k,
                                             cal.convention)
        except SaltbenchError as exc:
            notes.append(str(exc))
        else:
            by_model = {cal.convention_label: res.activity / gamma}
            refused: dict[str, str] = {}
            for c in candidates:
                if c == cal.convention:
                    continue
                try:
                    if c not in others:
                        others[c] = electrode_calibrate(session, es, c)
                    rc = sample_activity(others[c].fit, row.emf, row.u_emf, selectivity=extra,
                                         temperature_k=row.temperature_k)
                    if rc.activity is None:
                        refused[c] = "no activity on this calibration"
                        continue
                    by_model[others[c].convention_label] = rc.activity / _gamma_at_ionic_strength(
                        session, es, row.ionic_strength, row.temperature_k, c)
                except SaltbenchError as exc:
                    refused[c] = str(exc)
            conc = combine(res, res.activity / gamma, gamma, by_model, refused)
            salt = es.primary_salt
            nu = salt.nu_cation if es.ion.name == salt.cation.name else salt.nu_anion
            if conc.molality / nu * float(salt.ionic_strength(1.0)) > row.ionic_strength:
                notes.append("the primary salt alone would exceed the stated ionic strength")
    return ElectrodeSample(row.line, row.label, [], {}, res, conc, row.ionic_strength, notes)


@dataclass
class PhCalibrationRun:
    """A pH calibration (``calibration``: :class:`saltbench.measurements.ph_calibration.PhCalibration`)
    and each sample's pH (``samples``: (line, label, SamplePh))."""

    set: Any
    calibration: Any
    buffers: list[tuple[int, str]]  # (line, label) of each buffer, in the calibration's order
    samples: list[tuple[int, str, Any]]


def ph_calibrate(session: Session, key_or_file: Any) -> PhCalibrationRun:
    """Two- or multi-point pH calibration with the set's certified buffers, and its samples."""
    from saltbench.errors import UserError
    from saltbench.measurements.ph_calibration import calibrate_ph, sample_ph

    es = electrode_set(session, key_or_file)
    if es.kind != "ph_buffers":
        raise UserError(f"{es.key} is an {es.kind} set: calibrate it with 'saltbench electrode calibrate'")
    buffers = es.of_role("buffer")
    cal = calibrate_ph(np.array([b.ph for b in buffers]), np.array([b.emf for b in buffers]),
                       np.array([b.u_emf for b in buffers]), np.array([b.u_ph for b in buffers]),
                       es.temperature_k)
    samples = [(r.line, r.label, sample_ph(cal, r.emf, r.u_emf, temperature_k=r.temperature_k,
                                           u_temperature_k=es.u_temperature_k))
               for r in es.of_role("sample")]
    return PhCalibrationRun(es, cal, [(b.line, b.label) for b in buffers], samples)



def make_electrode_report(session: Session, sets: Sequence[Any], convention: str = "davies", *,
                          model_id: str | None = None, parameter_sets: Sequence[str] = (),
                          candidates: Sequence[str] = ELECTRODE_CANDIDATES, missing: str = "error",
                          title: str | None = None, folder: str | os.PathLike[str] | None = None,
                          command: str = "", argv: list[str] | None = None, created: str | None = None):
    """Calibrate every electrode set of ``sets`` (stored ids or files; pH-buffer sets by
    :func:`ph_calibrate`, the others by :func:`electrode_calibrate` on ``convention`` with their
    samples), then write the electrode-validation report into ``folder`` (default
    ``reports/<slug>``); returns a :class:`saltbench.report.writer.ReportResult` whose
    ``comparison`` is the :class:`saltbench.report.electrode_content.ElectrodeView`. Nothing is
    written when a set cannot be calibrated."""
    from saltbench.errors import UserError
    from saltbench.report.electrode_content import ElectrodeItem, ElectrodeView
    from saltbench.report.electrode_writer import write_electrode_report

    if not sets:
        raise UserError("name at least one electrode or pH-buffer set")
    items = []
    for key in sets:
        es = electrode_set(session, key)
        if es.kind == "ph_buffers":
            items.append(ElectrodeItem(ph=ph_calibrate(session, es)))
        else:
            cal = electrode_calibrate(session, es, convention, model_id=model_id, sets=parameter_sets,
                                      missing=missing)
            items.append(ElectrodeItem(calibration=cal,
                                       samples=electrode_samples(session, cal, candidates=candidates)))
    view = ElectrodeView(items, convention, model_id, list(parameter_sets), list(candidates))
    return write_electrode_report(session, view, title=title, folder=Path(folder) if folder else None,
                                  command=command, argv=argv, created=created)
