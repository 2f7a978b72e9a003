"""Write a comparison's report into one folder: HTML, PDF, Markdown, CSV tables, the figures as
PNG, and the JSON manifest (:func:`saltbench.api.make_report` runs the comparison first).

Layout of the folder (names are fixed, so no user text becomes a file name except through
:func:`saltbench.scaffold.names.slug`, checked by :func:`~saltbench.scaffold.names.inside`)::

    report.html  report.pdf  report.md  manifest.json
    tables/results.csv parameters.csv correlations.csv datasets.csv recommendations.csv
    figures/<electrolyte>-<n>.coefficients.png  .residuals.png  .validity.png

The time stamp is the only content that changes between two runs on the same store; it honours
``SOURCE_DATE_EPOCH`` (reproducible-builds.org) when set.
"""

from __future__ import annotations

import hashlib
import json
import os
import platform
import shutil
import tempfile
from collections.abc import Callable
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path

from saltbench.errors import UserError
from saltbench.scaffold.names import inside, slug

HTML_NAME, PDF_NAME, MD_NAME, MANIFEST_NAME = "report.html", "report.pdf", "report.md", "manifest.json"
FIGURE_DIR, TABLE_DIR = "figures", "tables"


@dataclass
class ReportResult:
    folder: Path
    files: list[Path]
    comparison: object
    manifest: dict
    agreement: object | None = None
    problems: list[str] = field(default_factory=list)


def time_stamp() -> str:
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    when = datetime.fromtimestamp(int(epoch), UTC) if epoch and epoch.isdigit() \
        else datetime.now(UTC)
    return when.replace(microsecond=0).isoformat().replace("+00:00", "Z")


def default_title(electrolytes) -> str:
    return "Activity-model comparison: " + ", ".join(electrolytes)


def default_folder(title: str, electrolytes, base: Path | None = None) -> Path:
    """``reports/<slug>`` under ``base`` (the current folder): the slug of the title, else of the
    electrolyte names, else ``report``."""
    root = (base or Path.cwd()) / "reports"
    name = slug(title) or slug("-".join(electrolytes)) or "report"
    return inside(root, name)


def _figures(comparison, residuals) -> dict[str, list]:
    from saltbench.report import figures as F

    order = list(dict.fromkeys(o.model for outs in comparison.outcomes.values() for o in outs))
    styles = F.model_styles(order)
    out = {}
    for i, (name, outs) in enumerate(comparison.outcomes.items(), start=1):
        stem = f"{slug(name) or 'electrolyte'}-{i}"
        data, target = comparison.data[name], comparison.recommendations[name].target_molality
        out[name] = [
            F.coefficient_figure(name, outs, data, comparison.datasets[name], styles, f"{stem}.coefficients"),
            F.residual_figure(name, outs, residuals, comparison.settings, styles, f"{stem}.residuals"),
            F.validity_figure(name, outs, data, target, styles, f"{stem}.validity"),
        ]
    return out


def _parameter_sets(session, comparison) -> list[dict]:
    from saltbench.store import parameter_sets as ps

    out = []
    for name, outs in comparison.outcomes.items():
        e = session.electrolyte(name)
        for o in outs:
            if not o.published_set:
                continue
            found = [p for p in ps.published(session.store, session.registry.model(o.model), e)
                     if p.set_id == o.published_set]
            p = found[0] if found else None
            out.append({"electrolyte": name, "model": o.model, "set": o.published_set,
                        "values": dict(p.values) if p else None, "a_phi": p.a_phi if p else None,
                        "source": p.source if p else None, "from_memory": o.published_from_memory})
    return out


def plugin_sections(reg, comparison, method: str = "render") -> list[tuple[str, str, str]]:
    """Sections from ``register_report_sections``: each section's ``method`` (``render`` for a
    one-salt report, ``render_mixture`` for a mixture report; a section without it is left out
    of that kind of report) called with ``comparison``; a failing one becomes a visible note."""
    out = []
    for rec, section in reg.call_list_hook("register_report_sections"):
        render = getattr(section, method, None)
        if not callable(render):
            continue
        title = str(getattr(section, "title", "") or f"Section from plugin {rec.name}")
        try:
            text = str(render(comparison))
        except Exception as exc:  # a plugin's bug must not stop the report
            text = f"This section could not be produced: {type(exc).__name__}: {exc}"
        out.append((rec.name, title, text))
    return out


def _sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def write_report(session, comparison, *, title: str | None = None, folder: Path | None = None,
                 command: str = "", argv: list[str] | None = None, created: str | None = None,
                 region=None) -> ReportResult:
    """Write every report file of ``comparison`` (run with curves) into ``folder`` (default
    ``reports/<slug>``). The comparison itself is run by :func:`saltbench.api.make_report`.
    ``region`` (a :class:`saltbench.comparison.region.TemperatureComparison` whose reference is
    ``comparison``) adds the section, figures, ``tables/region.csv`` and manifest entry of the
    validity over temperature and molality."""
    from saltbench import __version__
    from saltbench.report.content import ReportFacts, build_document
    from saltbench.report.manifest import build_manifest
    from saltbench.report.residuals import refit_residuals
    from saltbench.report.tables import csv_tables

    # over temperatures, every electrolyte of the region (some may lack data at the reference)
    names = list(region.regions) if region is not None else list(comparison.outcomes)
    title = (title or "").strip() or default_title(names)
    folder = (Path(folder) if folder else default_folder(title, names)).resolve()
    created = created or time_stamp()
    reg = session.registry
    electrolyte_objs = {n: session.electrolyte(n) for n in comparison.outcomes}
    residuals = refit_residuals(comparison, reg, electrolyte_objs)
    plugins = [{"name": p.name, "kind": p.kind, "path": p.path, "version": p.version} for p in reg.plugins]
    models = {mid: {"name": info.model.name, "plugin": info.plugin} for mid, info in reg.models.items()
              if any(o.model == mid for outs in comparison.outcomes.values() for o in outs)}
    store_path = str(session.store.path) if session.store.path else "(in memory)"
    store_hash = session.content_hash()
    figures = _figures(comparison, residuals)
    extra = plugin_sections(reg, comparison)
    facts = ReportFacts(title=title, created=created, command=command, software_version=__version__,
                        python=platform.python_version(), platform=platform.platform(),
                        store_path=store_path, store_hash=store_hash, manifest_name=MANIFEST_NAME,
                        plugins=plugins, models=models,
                        electrolytes={n: e.charge_label for n, e in electrolyte_objs.items()},
                        figures=figures, extra_sections=extra)
    doc = build_document(comparison, facts)
    tables = csv_tables(comparison)
    electrolytes = list(comparison.outcomes)
    if region is not None:
        region_figs = _add_region(doc, comparison, region, tables)
        figures = {**figures, **{f"region:{n}": [f] for n, f in region_figs.items()}}
        electrolytes = names

    def manifest_for(files: dict[str, str]) -> dict:
        from saltbench.report.manifest import region_entry

        manifest = build_manifest(comparison, title=title, electrolytes=electrolytes,
                                  command=command, argv=list(argv or []), created=created,
                                  store_path=store_path, store_hash=store_hash, plugins=plugins, models=models,
                                  parameter_sets=_parameter_sets(session, comparison), files=files)
        if region is not None:
            manifest["temperature_region"] = region_entry(region)
        return manifest

    written, manifest = write_atomically(folder, lambda tmp: _write_files(tmp, doc, figures, tables),
                                         manifest_for)
    return ReportResult(folder, written, comparison, manifest, problems=list(comparison.plugin_problems))


def _add_region(doc, comparison, region, tables: dict[str, str]) -> dict:
    """Put the region section under the findings of ``doc``, its CSV into ``tables``; returns its
    figures by electrolyte (file stems after the electrolytes' own figures)."""
    from saltbench.report import figures as F
    from saltbench.report.region_content import region_section, region_tables
    from saltbench.report.region_figures import region_figure

    # each model keeps the look it has in the report's other figures
    order = list(dict.fromkeys([o.model for outs in comparison.outcomes.values() for o in outs]
                               + [col.model for reg in region.regions.values() for col in reg.columns]))
    styles = F.model_styles(order)
    figs = {name: region_figure(reg, styles, f"{slug(name) or 'electrolyte'}-{i}.region")
            for i, (name, reg) in enumerate(region.regions.items(), start=1)}
    findings = next(s for s in doc.sections if s.key == "findings")
    number = findings.heading.split(" ", 1)[0]
    findings.children.append(region_section(region, figs, "region", f"{number}.1 Validity over temperature "
                                                                     "and molality"))
    tables.update(region_tables(region))
    return figs


def write_atomically(final: Path, write_files: Callable[[Path], list[Path]],
                     manifest_for: Callable[[dict[str, str]], dict]) -> tuple[list[Path], dict]:
    """Write a report into ``final``: ``write_files(folder)`` writes every file but the manifest
    into a fresh folder and returns their paths; ``manifest_for({relative path: SHA-256})`` gives
    the manifest; then the whole folder is moved into place. Returns the files (under ``final``)
    and the manifest."""
    if final.exists() and (not final.is_dir() or (any(final.iterdir()) and not (final / MANIFEST_NAME).exists())):
        raise UserError(f"{final} holds files that are not a saltbench report; choose a new or empty folder")
    try:
        final.parent.mkdir(parents=True, exist_ok=True)
        # Everything is written into a fresh folder beside the final one and moved into place
        # only when complete: an interrupted run leaves no report-looking folder, and a new run
        # never mixes its files with an earlier report's.
        folder = Path(tempfile.mkdtemp(prefix=f".{final.name}.partial-", dir=final.parent))
        (folder / FIGURE_DIR).mkdir(parents=True, exist_ok=True)
        (folder / TABLE_DIR).mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise UserError(f"cannot create the report folder {final}: {exc.strerror}") from None
    try:
        written = write_files(folder)
        files = {p.relative_to(folder).as_posix(): _sha256(p) for p in written}
        manifest = manifest_for(files)
        man_path = inside(folder, MANIFEST_NAME)
        man_path.write_text(json.dumps(manifest, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
        written.append(man_path)
        _move_into_place(folder, final)
    except BaseException:
        shutil.rmtree(folder, ignore_errors=True)
        raise
    return [final / p.relative_to(folder) for p in written], manifest


def _write_files(folder: Path, doc, figures, tables: dict[str, str]) -> list[Path]:
    """Figures, CSV ``tables`` ({file name: text}), HTML, Markdown and PDF into ``folder``."""
    from saltbench import __version__
    from saltbench.report.html import render_html
    from saltbench.report.markdown import render_markdown
    from saltbench.report.pdf import write_pdf

    written: list[Path] = []
    for figs in figures.values():
        for f in figs:
            path = inside(folder / FIGURE_DIR, f"{f.key}.png")
            path.write_bytes(f.png)
            written.append(path)
    for name, text in tables.items():
        path = inside(folder / TABLE_DIR, name)
        path.write_text(text, encoding="utf-8", newline="")
        written.append(path)
    html_path = inside(folder, HTML_NAME)
    html_path.write_text(render_html(doc, __version__), encoding="utf-8")
    md_path = inside(folder, MD_NAME)
    md_path.write_text(render_markdown(doc, FIGURE_DIR), encoding="utf-8")
    pdf_path = inside(folder, PDF_NAME)
    write_pdf(doc, pdf_path, __version__)
    return written + [html_path, md_path, pdf_path]


def _move_into_place(done: Path, final: Path) -> None:
    """Replace ``final`` (an earlier report, or nothing) by the complete folder ``done``."""
    old = None
    if final.exists():
        old = Path(tempfile.mkdtemp(prefix=f".{final.name}.old-", dir=final.parent))
        os.replace(final, old / final.name)
    os.replace(done, final)
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)

