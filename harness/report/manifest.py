"""The report's JSON manifest (what was run, on what, with what) and the check of a re-run
against it.

A re-run agrees when every result number matches to a relative 1e-6 (the fits are deterministic
on one machine; the margin absorbs last-digit differences of other BLAS builds) and every verdict
and recommendation is the same. Changed software, store or dataset hashes are reported beside
the verdict, since they explain a disagreement but do not make one.
"""

from __future__ import annotations

import json
import math
import platform
from dataclasses import dataclass, field
from importlib import metadata
from pathlib import Path

from saltbench.errors import UserError

FORMAT = "saltbench report manifest 1"
LIBRARIES = ("numpy", "scipy", "pandas", "matplotlib", "pluggy", "sqlite-utils", "iapws", "jinja2", "click")
REL_TOL = 1e-6
ABS_TOL = 1e-12


def clean(value):
    """JSON-ready copy: numpy scalars to Python, non-finite floats to None."""
    if hasattr(value, "item") and not isinstance(value, (list, dict, str)):
        try:
            value = value.item()
        except (ValueError, AttributeError):
            pass
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {str(k): clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [clean(v) for v in value]
    return value


def software() -> dict:
    from saltbench import __version__

    out: dict[str, str | None] = {"saltbench": __version__, "python": platform.python_version()}
    for lib in LIBRARIES:
        try:
            out[lib] = metadata.version(lib)
        except metadata.PackageNotFoundError:
            out[lib] = None
    return out


def platform_info() -> dict:
    return {"system": platform.system(), "release": platform.release(), "machine": platform.machine(),
            "python_implementation": platform.python_implementation(), "platform": platform.platform()}


def build_manifest(comparison, *, title: str, electrolytes: list[str], command: str, argv: list[str],
                   created: str, store_path: str, store_hash: str, plugins: list[dict],
                   models: dict[str, dict], parameter_sets: list[dict], files: dict[str, str]) -> dict:
    return clean({
        "format": FORMAT,
        "created": created,
        "title": title,
        "software": software(),
        "plugins": plugins,
        "models": models,
        "command": {"line": command, "argv": list(argv), "electrolytes": list(electrolytes),
                    "settings": comparison.settings.to_dict()},
        "store": {"path": store_path, "content_hash": store_hash},
        "datasets": [{"electrolyte": name, "key": d["key"], "content_hash": d.get("content_hash"),
                      "n_points": d.get("n_points"), "from_memory": d.get("from_memory")}
                     for name, ds in comparison.datasets.items() for d in ds],
        "parameter_sets": parameter_sets,
        "platform": platform_info(),
        "results": {"records": comparison.records(),
                    "recommendations": [r.to_dict() for r in comparison.recommendations.values()]},
        "files": files,
    })


def region_entry(over) -> dict:
    """The manifest's record of a comparison over temperatures (``report --temperatures``): the
    range asked, the temperature the report details, every region cell and each statement."""
    s = over.settings
    return clean({"range_k": list(s.temperatures_k), "published_beyond_range": s.published_beyond_range,
                  "reference_k": over.reference_k,
                  "temperatures_k": {n: list(r.temperatures_k) for n, r in over.regions.items()},
                  "records": over.records(), "recommendations": over.statements()})


def load_manifest(path: Path) -> dict:
    try:
        data = json.loads(Path(path).read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError) as exc:
        raise UserError(f"--from {path}: cannot read the manifest ({exc})") from None
    except json.JSONDecodeError as exc:
        raise UserError(f"--from {path}: not JSON (line {exc.lineno}: {exc.msg})") from None
    if not isinstance(data, dict) or data.get("format") != FORMAT:
        raise UserError(f"--from {path}: not a saltbench report manifest (expected format {FORMAT!r})")
    for key in ("command", "results", "title"):
        if key not in data:
            raise UserError(f"--from {path}: the manifest has no {key!r} entry")
    return data


def settings_from(manifest: dict):
    from saltbench.comparison.settings import CompareSettings

    raw = dict(manifest["command"]["settings"])
    for key in ("models", "on", "datasets"):
        raw[key] = tuple(raw.get(key) or ())
    if raw.get("temperatures_k") is not None:
        raw["temperatures_k"] = tuple(float(t) for t in raw["temperatures_k"])
    try:
        return CompareSettings(**raw)
    except TypeError as exc:
        raise UserError(f"the manifest's settings do not fit this saltbench version: {exc}") from None


@dataclass
class Agreement:
    agree: bool
    differences: list[str] = field(default_factory=list)  # results that changed
    notes: list[str] = field(default_factory=list)  # inputs that changed (software, store, data)

    def lines(self) -> list[str]:
        head = ("Results agree with the manifest." if self.agree else
                f"Results differ from the manifest in {len(self.differences)} place(s):")
        return [head] + [f"  - {d}" for d in self.differences] + [f"  note: {n}" for n in self.notes]


def _same(a, b) -> bool:
    if isinstance(a, bool) or isinstance(b, bool) or not isinstance(a, (int, float)) \
            or not isinstance(b, (int, float)):
        return a == b
    return math.isclose(float(a), float(b), rel_tol=REL_TOL, abs_tol=ABS_TOL)


def _diff(prefix: str, old, new, out: list[str]) -> None:
    if isinstance(old, dict) and isinstance(new, dict):
        for k in sorted(set(old) | set(new)):
            _diff(f"{prefix}.{k}", old.get(k), new.get(k), out)
    elif isinstance(old, list) and isinstance(new, list) and len(old) == len(new):
        for i, (a, b) in enumerate(zip(old, new)):
            _diff(f"{prefix}[{i}]", a, b, out)
    elif not _same(old, new):
        out.append(f"{prefix}: {old!r} then, {new!r} now")


def _diff_keyed(before: dict, now: dict, label, diffs: list[str], order=None) -> None:
    """Records of a manifest and of a re-run matched by key (``order`` sorts the keys): each one
    missing on a side, and each difference of the matched (:func:`_diff`), under ``label(key)``."""
    for key in sorted(set(before) | set(now), key=order):
        text = label(key)
        if key not in now:
            diffs.append(f"{text}: in the manifest, missing now")
        elif key not in before:
            diffs.append(f"{text}: new, not in the manifest")
        else:
            _diff(text, before[key], now[key], diffs)


def check_agreement(manifest: dict, new: dict) -> Agreement:
    """Compare the results and inputs of a new manifest with an earlier one."""
    diffs: list[str] = []
    old_recs = {(r["electrolyte"], r["model"]): r for r in manifest["results"]["records"]}
    new_recs = {(r["electrolyte"], r["model"]): r for r in new["results"]["records"]}
    _diff_keyed(old_recs, new_recs, lambda key: f"{key[0]} {key[1]}", diffs)
    old_rec = {r["electrolyte"]: r for r in manifest["results"].get("recommendations", [])}
    for r in new["results"]["recommendations"]:
        before = old_rec.get(r["electrolyte"])
        if before is None or before.get("model") != r["model"]:
            diffs.append(f"{r['electrolyte']} recommendation: {before and before.get('model')!r} then, "
                         f"{r['model']!r} now")
    _region_diffs(manifest.get("temperature_region"), new.get("temperature_region"), diffs)
    return Agreement(not diffs, diffs, input_notes(manifest, new))


def _region_diffs(old: dict | None, new: dict | None, diffs: list[str]) -> None:
    """Differences between two manifests' regions over temperature, cell by cell."""
    if old is None and new is None:
        return
    if old is None or new is None:
        diffs.append(f"temperature region: {'absent' if old is None else 'present'} then, "
                     f"{'absent' if new is None else 'present'} now")
        return

    def cells(entry: dict) -> dict:
        return {(r["electrolyte"], r["temperature_k"], r["model"], r["column"]): r for r in entry["records"]}

    _diff_keyed(cells(old), cells(new), lambda key: f"{key[0]} {key[2]} ({key[3]}) at {key[1]:g} K", diffs,
                order=str)
    old_st = {r["electrolyte"]: r["statement"] for r in old.get("recommendations", [])}
    for r in new.get("recommendations", []):
        if old_st.get(r["electrolyte"]) != r["statement"]:
            diffs.append(f"{r['electrolyte']} region: {old_st.get(r['electrolyte'])!r} then, {r['statement']!r} now")


def input_notes(manifest: dict, new: dict) -> list[str]:
    """What changed in the inputs between an earlier manifest and a new one of any report kind:
    the store's content, its datasets, the software and the plugins."""
    notes = []
    if manifest.get("store", {}).get("content_hash") != new["store"]["content_hash"]:
        notes.append("the store's content hash changed (data or parameter sets were added or edited)")
    old_ds = {d["key"]: d.get("content_hash") for d in manifest.get("datasets", [])}
    for d in new["datasets"]:
        if d["key"] in old_ds and old_ds[d["key"]] != d["content_hash"]:
            notes.append(f"dataset {d['key']} changed")
        elif d["key"] not in old_ds:
            notes.append(f"dataset {d['key']} is new")
    for k, v in new["software"].items():
        if manifest.get("software", {}).get(k) != v:
            notes.append(f"{k} {manifest.get('software', {}).get(k)} then, {v} now")
    old_pl = {p["name"]: p.get("version") for p in manifest.get("plugins", [])}
    for p in new["plugins"]:
        if old_pl.get(p["name"]) != p.get("version"):
            notes.append(f"plugin {p['name']} {old_pl.get(p['name'])} then, {p.get('version')} now")
    return notes
