"""The Python API: everything the command line does, as functions returning DataFrames.

    from saltbench.api import Session
    s = Session()                      # default store, seeded from the bundled data on first use
    s.electrolytes()                   # DataFrame
    s.points("NaCl")                   # DataFrame of every stored point for NaCl
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from saltbench.store import queries
from saltbench.store.bundled import sync_bundled
from saltbench.store.connection import Store, open_store
from saltbench.store.ingest import IngestReport, ingest

if TYPE_CHECKING:
    from saltbench.fitting.uncertainty import Propagation


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
        return sync_bundled(self.store, self.plugin_data_files(), force=force)

    def add(self, paths: Sequence[str | os.PathLike[str]]) -> IngestReport:
        """Load user files; a folder stands for its bibliographies (``*.sources.txt``,
        ``sources.txt``) and datasets or parameter files (``*.csv``)."""
        return ingest(self.store, expand_paths(paths), origin="user", provider="user")

    def remove(self, key: str, force: bool = False) -> list[str]:
        """Remove one of your own datasets (see :func:`saltbench.store.ingest.remove_dataset`)."""
        from saltbench.store.ingest import remove_dataset

        return remove_dataset(self.store, key, force=force)

    def electrolytes(self) -> pd.DataFrame:
        return queries.electrolytes(self.store)

    def datasets(self, electrolyte: str | None = None) -> pd.DataFrame:
        return queries.datasets(self.store, self.electrolyte(electrolyte).name if electrolyte else None)

    def points(self, electrolyte: str | None = None) -> pd.DataFrame:
        return queries.points(self.store, self.electrolyte(electrolyte).name if electrolyte else None)

    def electrolyte(self, name: str):
        return queries.electrolyte(self.store, name)

    def content_hash(self) -> str:
        return queries.content_hash(self.store)


def expand_paths(paths: Sequence[str | os.PathLike[str]]) -> list[Path]:
    out: list[Path] = []
    for p in map(Path, paths):
        if p.is_dir():
            bibs = sorted(q for q in p.glob("*.txt") if q.name == "sources.txt" or q.name.endswith(".sources.txt"))
            found = bibs + sorted(p.glob("*.csv"))
            if not found:
                from saltbench.errors import UserError

                # Adding nothing and saying nothing reads as success; the user meant some files.
                raise UserError(f"{p}: folder holds no bibliography (*.sources.txt, sources.txt) "
                                "or CSV file to add")
            out += found
        else:
            out.append(p)
    return out


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
    names = [session.electrolyte(n).name for n in electrolytes] or list(session.electrolytes().electrolyte)
    for name in names:
        e = session.electrolyte(name)
        part = check_electrolyte(e, session.points(name))
        report.findings += part.findings
        report.summary += part.summary
    return report


def resolve_parameters(session: Session, model, electrolyte, choice: str = "auto"):
    """Parameters for ``model`` and ``electrolyte``: ``auto`` (published if any, else defaults),
    ``published`` (first published set), ``defaults``, or a parameter-set id."""
    from saltbench.errors import UserError
    from saltbench.store import parameter_sets as ps

    if choice in ("auto", "published"):
        found = ps.published(session.store, model, electrolyte)
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
                                 rows=[(t, v, m) for t, (v, m) in rows.items()])
    written = [out / f"{set_id}.params.csv"]
    written[0].write_text(text, encoding="utf-8")
    if entry:
        written.append(out / f"{set_id}.sources.txt")
        written[1].write_text(entry, encoding="utf-8")
    return written


def parameter_basis(params, temperature_k: float = 298.15, constant: str | float = "published"):
    """The Debye-Hückel constant and temperature ``params`` are evaluated at: the one decision
    (:mod:`saltbench.water.basis`) that predict, compare, fit and the report share."""
    from saltbench.water.basis import evaluation_basis

    set_t = None if params.kind == "defaults" else params.temperature_k
    return evaluation_basis(temperature_k, set_id=params.set_id, set_a_phi=params.a_phi,
                            set_temperature_k=set_t, constant=constant)


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
        if basis.off_temperature:
            why.append(f"at {t:g} K, the set holds values for {basis.set_temperature_k:g} K")
        elif span is not None and not model.validity.covers_temperature(t):
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
    params = resolve_parameters(session, model, e, params_choice)
    if params.kind == "defaults" and params_choice == "auto" and model.free_parameters(e):
        raise UserError(f"no parameter set of {model.id} for {e.name}: fit one with 'saltbench fit {e.name} "
                        f"--model {model.id}', or name a stored set with --params SET ('saltbench params "
                        f"--model {model.id}' lists them); --params defaults uses the model's defaults knowingly")
    basis = parameter_basis(params, temperature_k, constant)
    ctx = make_context(e, dh=basis.dh)
    with plugin_output_to_stderr():
        ev = evaluate(model, e, m, params.values, ctx=ctx)
    unc = None
    if params.covariance is not None:
        from saltbench.fitting import propagate

        names, matrix = params.covariance
        unc = propagate(model, e, m, params={**model.defaults(e), **params.values},
                        covariance=np.array(matrix), names=names, dh=ctx.dh)
    return Prediction(e, model, params, basis, ev, unc, extrapolation_reasons(model, e, params, m, basis))


def select_data(session: Session, electrolyte, *, datasets=None, on=None, up_to=None, temperature_k=298.15):
    from saltbench.fitting.selection import select

    e = session.electrolyte(electrolyte) if isinstance(electrolyte, str) else electrolyte
    points = session.points(e.name)
    stored = sorted({round(float(t), 2) for t in points.temperature_k})
    if stored and all(abs(t - temperature_k) >= 0.05 for t in stored):
        from saltbench.errors import UserError

        # Say which temperatures there are: the bundled data are all at 25 °C, and a model is
        # judged only against data at the temperature asked.
        raise UserError(f"no data for {e.name} at {temperature_k:g} K; its data are at "
                        f"{', '.join(f'{t:g}' for t in stored)} K (add your own measurements at "
                        f"{temperature_k:g} K with 'saltbench data add', or use 'saltbench predict "
                        "--temperature', which warns that it extrapolates)")
    return select(points, session.datasets(e.name), e, datasets=datasets, on=on,
                  up_to=up_to, temperature_k=temperature_k)


def compare(session: Session, electrolytes, settings=None, *, jobs: int = 1, curves: bool = False,
            progress: bool = False):
    """Compare models on each electrolyte; returns a :class:`saltbench.comparison.runner.Comparison`."""
    from saltbench.comparison.assess import PublishedInput
    from saltbench.comparison.runner import ElectrolyteTask, run_comparison
    from saltbench.comparison.settings import CompareSettings
    from saltbench.errors import UserError
    from saltbench.store import parameter_sets as ps

    settings = settings or CompareSettings()
    reg = session.registry
    ids = list(settings.models) or list(reg.models)
    for mid in ids:
        reg.model(mid)  # unknown ids are a user error, before any work
    tasks, skipped, per_ion_models = [], {}, {}
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
        published = {}
        for mid in supported:
            found = ps.published(session.store, reg.model(mid), e)
            published[mid] = (PublishedInput(found[0].set_id, found[0].values, found[0].a_phi,
                                             found[0].from_memory, found[0].temperature_k) if found else None)
        top = float(sel.data.molality.max())
        target = min(settings.up_to, top) if settings.up_to else top
        tasks.append(ElectrolyteTask(e, sel.data, sel.datasets, published, supported, target))
    comp = run_comparison(tasks, settings, registry=reg, plugin_files=session._plugin_files,
                          disabled=session._disabled, jobs=jobs, curves=curves, progress=progress)
    comp.skipped = skipped
    comp.per_ion = per_ion_models
    from saltbench.comparison.sources import source_disagreements

    for task in tasks:
        disagreeing = source_disagreements(task.data, settings.tol_ln_gamma, settings.tol_phi)
        if disagreeing:
            comp.disagreements[task.electrolyte.name] = disagreeing
    return comp


def needs_several_salts(model, electrolyte) -> bool:
    """Whether the model's free parameters belong to single ions (cation and anion alike)."""
    scopes = {p.scope for p in model.free_parameters(electrolyte)}
    return {"cation", "anion"} <= scopes
