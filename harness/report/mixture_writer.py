"""Write a mixture comparison's report: the same files, writers, styles and manifest as a one-salt
report (:mod:`saltbench.report.writer`), from a :class:`~saltbench.report.mixture_view.MixtureView`
(:func:`saltbench.api.make_mixture_report` runs the comparison first).

Layout of the folder::

    report.html  report.pdf  report.md  manifest.json
    tables/results.csv parameters.csv correlations.csv datasets.csv recommendations.csv held_sets.csv
    figures/<system>-mixture.residuals.png  .validity.png

The manifest is a one-salt report's manifest (its ``command.electrolytes`` empty) with
``command.mixture`` naming the system and a ``mixture`` entry: the datasets with their content
hashes and invented marks, the held parameter sets and the recommendation in ionic strength.
"""

from __future__ import annotations

import platform
from pathlib import Path
from types import SimpleNamespace

from saltbench.report.mixture_view import MixtureView
from saltbench.report.writer import (
    MANIFEST_NAME,
    ReportResult,
    _write_files,
    default_folder,
    plugin_sections,
    time_stamp,
    write_atomically,
)
from saltbench.scaffold.names import slug


def default_mixture_title(system: str) -> str:
    return f"Activity-model comparison on mixtures: {system}"


def _figures(view: MixtureView, residuals) -> dict[str, list]:
    from saltbench.report import figures as F

    outs = list(view.comparison.outcomes)  # type: ignore[attr-defined]
    styles = F.model_styles([o.model for o in outs])
    stem = f"{slug(view.system) or 'system'}-mixture"
    # the validity chart reads the data's span from ``.molality``: here, ionic strengths
    span = SimpleNamespace(molality=view.data.composition.ionic_strength)  # type: ignore[attr-defined]
    return {view.system: [
        F.residual_figure(view.system, outs, residuals, view.settings, styles, f"{stem}.residuals",
                          axis=F.IONIC_STRENGTH),
        F.validity_figure(view.system, outs, span, view.recommendation.target_molality, styles,
                          f"{stem}.validity", axis=F.IONIC_STRENGTH),
    ]}


def write_mixture_report(session, view: MixtureView, *, title: str | None = None, folder: Path | None = None,
                         command: str = "", argv: list[str] | None = None,
                         created: str | None = None) -> ReportResult:
    """Write every report file of the mixture comparison ``view`` into ``folder`` (default
    ``reports/<slug of the title>``)."""
    from saltbench import __version__
    from saltbench.report.content import ReportFacts
    from saltbench.report.manifest import build_manifest, clean
    from saltbench.report.mixture_content import build_mixture_document
    from saltbench.report.residuals import mixture_residuals
    from saltbench.report.tables import held_set_rows, mixture_csv_tables

    system = view.system
    title = (title or "").strip() or default_mixture_title(system)
    folder = (Path(folder) if folder else default_folder(title, [system])).resolve()
    created = created or time_stamp()
    reg = session.registry
    outs = list(view.comparison.outcomes)  # type: ignore[attr-defined]
    residuals = mixture_residuals(view.comparison, view.data, reg)
    plugins = [{"name": p.name, "kind": p.kind, "path": p.path, "version": p.version} for p in reg.plugins]
    models = {mid: {"name": info.model.name, "plugin": info.plugin} for mid, info in reg.models.items()
              if any(o.model == mid for o in outs)}
    store_path = str(session.store.path) if session.store.path else "(in memory)"
    store_hash = session.content_hash()
    figures = _figures(view, residuals)
    facts = ReportFacts(title=title, created=created, command=command, software_version=__version__,
                        python=platform.python_version(), platform=platform.platform(),
                        store_path=store_path, store_hash=store_hash, manifest_name=MANIFEST_NAME,
                        plugins=plugins, models=models, figures=figures,
                        extra_sections=plugin_sections(reg, view.comparison, "render_mixture"))
    doc = build_mixture_document(view, facts)

    def manifest_for(files: dict[str, str]) -> dict:
        manifest = build_manifest(view, title=title, electrolytes=[], command=command, argv=list(argv or []),
                                  created=created, store_path=store_path, store_hash=store_hash,
                                  plugins=plugins, models=models, parameter_sets=held_set_rows(view),
                                  files=files)
        manifest["command"]["mixture"] = view.asked or system
        manifest["command"]["sets"] = list(view.sets_asked)
        rec = view.recommendation
        manifest["mixture"] = clean({
            "system": system,
            "abscissa": "ionic_strength",
            "datasets": [{k: d.get(k) for k in ("key", "content_hash", "n_points", "from_memory", "invented",
                                                 "citation", "min_ionic_strength", "max_ionic_strength")}
                         for d in view.datasets[system]],
            "recommendation": {"model": rec.model, "target_ionic_strength": rec.target_molality,
                               "statement": view.statement},
        })
        return manifest

    written, manifest = write_atomically(
        folder, lambda tmp: _write_files(tmp, doc, figures, mixture_csv_tables(view)), manifest_for)
    return ReportResult(folder, written, view.comparison, manifest)
