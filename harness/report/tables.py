"""The report's result tables as CSV files, at full precision (Python's shortest round-trip form
of each float), for reviewers who check the numbers in a spreadsheet.

Text cells a spreadsheet would read as a formula (starting with ``=``, ``+``, ``-``, ``@``, tab
or carriage return) get a leading apostrophe, the usual defence against formula injection
(OWASP, "CSV Injection"); numbers are written as numbers.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Iterable, Sequence

RESULT_COLUMNS = ["electrolyte", "model", "model_name", "plugin", "n_params", "n_points", "rms_ln_gamma",
                  "max_ln_gamma", "rms_osmotic", "max_osmotic", "chi2_reduced", "heldout_rms_ln_gamma",
                  "heldout_rms_osmotic", "aicc", "bic", "valid_up_to_published", "valid_up_to_refit",
                  "valid_ionic_strength_refit", "limited_by_refit", "limited_by_published",
                  "published_set", "converged", "flags", "recommended", "verdict"]


def _cell(value) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return repr(value) if math.isfinite(value) else ""
    if isinstance(value, int):
        return str(value)
    text = str(value)
    return "'" + text if text[:1] in ("=", "+", "-", "@", "\t", "\r") else text


def to_csv(rows: Iterable[dict], columns: Sequence[str]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(columns)
    for r in rows:
        w.writerow([_cell(r.get(c)) for c in columns])
    return buf.getvalue()


def result_rows(comparison) -> list[dict]:
    return [{**r, "flags": "; ".join(r["flags"])} for r in comparison.records()]


def parameter_rows(comparison) -> list[dict]:
    out = []
    for outs in comparison.outcomes.values():
        for o in outs:
            for p in (o.fit or {}).get("parameters", []):
                out.append({"electrolyte": o.electrolyte, "model": o.model, "parameter": p["name"],
                            "value": p["value"], "stderr": p["stderr"], "unit": p.get("unit", ""),
                            "fixed": bool(p.get("fixed"))})
    return out


def correlation_rows(comparison) -> list[dict]:
    out = []
    for outs in comparison.outcomes.values():
        for o in outs:
            corr = (o.fit or {}).get("correlation") or {}
            names = corr.get("names") or []
            for i, a in enumerate(names):
                for j, b in enumerate(names):
                    if j > i:
                        out.append({"electrolyte": o.electrolyte, "model": o.model, "parameter_1": a,
                                    "parameter_2": b, "correlation": corr["matrix"][i][j]})
    return out


def dataset_rows(comparison) -> list[dict]:
    return [{"electrolyte": name, "dataset": d["key"], **{k: d.get(k) for k in (
        "source", "property", "n_points", "from_memory", "content_hash", "citation", "typed", "table_ref",
        "origin")}} for name, ds in comparison.datasets.items() for d in ds]


def recommendation_rows(comparison) -> list[dict]:
    return [{"electrolyte": name, "target_molality": r.target_molality, "recommended_model": r.model,
             "furthest_model": r.furthest_model, "furthest_molality": r.furthest_molality,
             "statement": r.statement} for name, r in comparison.recommendations.items()]


TABLES = {
    "results.csv": (result_rows, RESULT_COLUMNS),
    "parameters.csv": (parameter_rows, ["electrolyte", "model", "parameter", "value", "stderr", "unit", "fixed"]),
    "correlations.csv": (correlation_rows, ["electrolyte", "model", "parameter_1", "parameter_2", "correlation"]),
    "datasets.csv": (dataset_rows, ["electrolyte", "dataset", "source", "property", "n_points", "from_memory",
                                    "content_hash", "citation", "typed", "table_ref", "origin"]),
    "recommendations.csv": (recommendation_rows, ["electrolyte", "target_molality", "recommended_model",
                                                  "furthest_model", "furthest_molality", "statement"]),
}


def csv_tables(comparison) -> dict[str, str]:
    """``{file name: CSV text}`` for every result table."""
    return {name: to_csv(rows(comparison), cols) for name, (rows, cols) in TABLES.items()}


# -- a mixture report (saltbench.report.mixture_view.MixtureView): results.csv, parameters.csv and
# correlations.csv as above, their 'electrolyte' column holding the system and their ranges ionic
# strengths; the datasets, recommendation and held sets in tables of their own.
MIXTURE_DATASET_COLUMNS = ["system", "dataset", "source", "property", "n_points", "min_ionic_strength",
                           "max_ionic_strength", "invented", "from_memory", "content_hash", "citation", "typed",
                           "table_ref", "origin"]
MIXTURE_RECOMMENDATION_COLUMNS = ["system", "target_ionic_strength", "recommended_model", "furthest_model",
                                  "furthest_ionic_strength", "statement"]
HELD_SET_COLUMNS = ["system", "model", "parameter_set", "source", "from_memory"]


def mixture_dataset_rows(view) -> list[dict]:
    return [{**d, "dataset": d["key"]} for d in view.datasets[view.system]]


def mixture_recommendation_rows(view) -> list[dict]:
    r = view.recommendation
    return [{"system": view.system, "target_ionic_strength": r.target_molality, "recommended_model": r.model,
             "furthest_model": r.furthest_model, "furthest_ionic_strength": r.furthest_molality,
             "statement": view.statement}]


def held_set_rows(view) -> list[dict]:
    return [{"system": view.system, "model": h.model, "parameter_set": h.set_id, "source": h.source,
             "from_memory": h.from_memory} for h in view.held_sets]


def mixture_csv_tables(view) -> dict[str, str]:
    """``{file name: CSV text}`` for every table of a mixture report."""
    out = {name: to_csv(rows(view), cols) for name, (rows, cols) in TABLES.items()
           if name in ("results.csv", "parameters.csv", "correlations.csv")}
    out["datasets.csv"] = to_csv(mixture_dataset_rows(view), MIXTURE_DATASET_COLUMNS)
    out["recommendations.csv"] = to_csv(mixture_recommendation_rows(view), MIXTURE_RECOMMENDATION_COLUMNS)
    out["held_sets.csv"] = to_csv(held_set_rows(view), HELD_SET_COLUMNS)
    return out
