"""report --mixture (issue 19, item 4): a mixture family written up like one salt, on the invented
Kestrel Bay series (refdata/examples/mixtures: gamma±(HCl) in HCl + NaCl made by Harned's rule,
log10 gamma±(HCl) = log10 gamma±(HCl alone) - 0.031 y_NaCl I, noise 0.0015 in gamma±; Harned's
rule: Harned and Owen, The Physical Chemistry of Electrolytic Solutions, 3rd ed., 1958, ch. 14,
from memory).

The report is checked against what the other commands say of the same store (compare --mixture,
fit --mixture, data show), against SHA-256 of the files it wrote (hashlib), and against file
signatures (PNG: ISO/IEC 15948 / RFC 2083, section 3.1; PDF: ISO 32000-1, 7.5.2).
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import shutil
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "refdata" / "examples" / "mixtures"
SYSTEM = "HCl + NaCl"
MODELS = "pitzer,sit,davies"


@pytest.fixture
def mixture_store(seeded_store, run_main, tmp_path):
    folder = tmp_path / "mixtures"
    shutil.copytree(EXAMPLES, folder)
    code, out, err = run_main("data", "add", str(folder), store=seeded_store)
    assert code == 0, err
    return seeded_store


@pytest.fixture
def mixture_report(mixture_store, run_main, tmp_path):
    out = tmp_path / "mix-report"
    code, stdout, err = run_main("report", "--mixture", SYSTEM, "--models", MODELS, "--out", str(out),
                                 store=mixture_store)
    assert code == 0, err
    return {"out": out, "stdout": stdout, "store": mixture_store}


def test_the_report_folder_holds_every_kind_of_file(mixture_report):
    out = mixture_report["out"]
    for name in ("report.html", "report.md", "report.pdf", "manifest.json"):
        assert (out / name).is_file(), name
    assert (out / "report.pdf").read_bytes()[:5] == b"%PDF-"  # ISO 32000-1, 7.5.2
    for name in ("results.csv", "parameters.csv", "correlations.csv", "datasets.csv", "recommendations.csv",
                 "held_sets.csv"):
        assert (out / "tables" / name).is_file(), name
    pngs = sorted(p.name for p in (out / "figures").iterdir())
    assert pngs == ["hcl-nacl-mixture.residuals.png", "hcl-nacl-mixture.validity.png"]
    for p in (out / "figures").iterdir():
        assert p.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # RFC 2083, 3.1
    manifest = json.loads((out / "manifest.json").read_text(encoding="utf-8"))
    # every file but the manifest is listed with its SHA-256, and nothing else is in the folder
    listed = set(manifest["files"])
    present = {p.relative_to(out).as_posix() for p in out.rglob("*") if p.is_file()} - {"manifest.json"}
    assert listed == present
    for rel, digest in manifest["files"].items():
        assert hashlib.sha256((out / rel).read_bytes()).hexdigest() == digest, rel
    assert not [p for p in out.parent.iterdir() if ".partial-" in p.name]


def test_the_manifest_names_the_mixture_datasets_and_the_command(mixture_report, run_main):
    out, store = mixture_report["out"], mixture_report["store"]
    manifest = json.loads((out / "manifest.json").read_text(encoding="utf-8"))
    code, text, err = run_main("data", "show", "hcl-nacl.gamma-hcl.kestrel-notebook-12", "--format", "json",
                               store=store)
    assert code == 0, err
    shown = json.loads(text)[0]
    assert [(d["key"], d["content_hash"]) for d in manifest["mixture"]["datasets"]] == \
        [(shown["key"], shown["content_hash"])]
    assert [(d["key"], d["content_hash"]) for d in manifest["datasets"]] == [(shown["key"], shown["content_hash"])]
    assert manifest["mixture"]["datasets"][0]["invented"] is True
    assert manifest["command"]["mixture"] == SYSTEM
    assert "--mixture" in manifest["command"]["line"] and "HCl + NaCl" in manifest["command"]["line"]
    assert manifest["command"]["settings"]["models"] == MODELS.split(",")


def test_the_recommendation_is_the_one_compare_gives(mixture_report, run_main):
    out, store = mixture_report["out"], mixture_report["store"]
    code, text, err = run_main("compare", "--mixture", SYSTEM, "--models", MODELS, "--format", "json",
                               store=store)
    assert code == 0, err
    recommended = [r["model"] for r in json.loads(text) if r["recommended"]]
    # Harned's rule with one coefficient is what Pitzer's theta and psi describe (Pitzer and Kim,
    # J. Am. Chem. Soc. 96 (1974) 5701, from memory): the data were made so
    assert recommended == ["pitzer"]
    manifest = json.loads((out / "manifest.json").read_text(encoding="utf-8"))
    statement = manifest["mixture"]["recommendation"]["statement"]
    assert statement.startswith("Pitzer [pitzer] is the simplest model") and "3 mol/kg of ionic strength" in statement
    assert statement in mixture_report["stdout"]
    md = (out / "report.md").read_text(encoding="utf-8")
    plain = md.replace("\\", "")
    assert statement in plain
    rows = list(csv.DictReader(io.StringIO((out / "tables" / "recommendations.csv").read_text(encoding="utf-8"))))
    assert rows == [{"system": SYSTEM, "target_ionic_strength": "3.0", "recommended_model": "pitzer",
                     "furthest_model": "", "furthest_ionic_strength": "", "statement": statement}]
    html = (out / "report.html").read_text(encoding="utf-8")
    assert "mol/kg of ionic strength" in html and "HCl + NaCl" in html


def test_the_mixing_terms_and_held_sets_are_those_of_fit_mixture(mixture_report, run_main):
    out, store = mixture_report["out"], mixture_report["store"]
    code, text, err = run_main("fit", "--mixture", SYSTEM, "--model", "pitzer", "--format", "json", store=store)
    assert code == 0, err
    fitted = {p["name"]: p for p in json.loads(text)["parameters"] if not p["fixed"]}
    rows = [r for r in csv.DictReader(io.StringIO((out / "tables" / "parameters.csv").read_text(encoding="utf-8")))
            if r["model"] == "pitzer" and r["fixed"] == "false"]
    assert {r["parameter"] for r in rows} == set(fitted) == {"theta[H+/Na+]", "psi[H+/Na+/Cl-]"}
    for r in rows:
        assert float(r["value"]) == pytest.approx(fitted[r["parameter"]]["value"], rel=1e-6)
        assert float(r["stderr"]) == pytest.approx(fitted[r["parameter"]]["stderr"], rel=1e-6)
    held = list(csv.DictReader(io.StringIO((out / "tables" / "held_sets.csv").read_text(encoding="utf-8"))))
    code, text, err = run_main("params", "--format", "json", store=store)
    assert code == 0, err
    listed = {s["set_id"]: s for s in json.loads(text)}
    pitzer_sets = [h for h in held if h["model"] == "pitzer"]
    assert pitzer_sets and all(h["parameter_set"] in listed for h in held)
    for h in held:
        assert (h["from_memory"] == "true") == bool(listed[h["parameter_set"]]["from_memory"])
    md = (out / "report.md").read_text(encoding="utf-8")
    assert "theta\\[H+/Na+\\]" in md and "Parameter sets the other values were held at" in md


def test_invented_data_and_the_cautions_are_shown(mixture_report):
    out = mixture_report["out"]
    md = (out / "report.md").read_text(encoding="utf-8").replace("\\", "")  # Markdown escapes off
    assert "hcl-nacl.gamma-hcl.kestrel-notebook-12** (INVENTED)" in md and "Invented data" in md
    assert "Regulated or safety-related use" in md and "local" in md and "licensed practice" in md
    assert "Single-ion activities" in md
    assert "Reproducing this report" in md
    html = (out / "report.html").read_text(encoding="utf-8")
    assert '<span class="badge">invented</span>' in html


def test_the_residual_figure_rests_on_the_fitted_models(mixture_store, run_main):
    """The residuals drawn are those behind the comparison's RMS (re-evaluated from the stored
    fit, so a wrong parameter would show)."""
    import numpy as np

    from saltbench.api import Session, compare_mixture, mixture_data
    from saltbench.comparison.settings import CompareSettings
    from saltbench.report.residuals import mixture_residuals

    s = Session(mixture_store)
    data, _ = mixture_data(s, SYSTEM)
    comp = compare_mixture(s, SYSTEM, CompareSettings(models=tuple(MODELS.split(","))))
    found = mixture_residuals(comp, data, s.registry)
    assert {m for _, m in found} == {o.model for o in comp.outcomes if not o.error}
    for o in comp.outcomes:
        r = found[(SYSTEM, o.model)]
        assert r.rms("ln_gamma") == pytest.approx(o.record()["rms_ln_gamma"], rel=1e-9)
        # the abscissa is ionic strength: of a 1-1 + 1-1 mixture, the total molality
        # (IUPAC Green Book, 3rd ed., 2007, 2.13: I = 1/2 sum m_i z_i^2)
        m = data.composition.molality
        assert np.allclose(r.molality, m.sum(axis=1) / 2 * 1.0)


def test_a_rerun_from_the_manifest_agrees(mixture_report, run_main, tmp_path):
    out, store = mixture_report["out"], mixture_report["store"]
    code, stdout, err = run_main("report", "--from", str(out / "manifest.json"), "--out", str(tmp_path / "again"),
                                 store=store)
    assert code == 0, stdout + err
    assert "Results agree with the manifest." in stdout


def test_one_dataset_by_its_key(mixture_store, run_main, tmp_path):
    key = "hcl-nacl.gamma-hcl.kestrel-notebook-12"
    out = tmp_path / "one"
    code, stdout, err = run_main("report", "--mixture", key, "--models", "pitzer", "--out", str(out),
                                 store=mixture_store)
    assert code == 0, err
    manifest = json.loads((out / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["command"]["mixture"] == key
    assert [d["key"] for d in manifest["mixture"]["datasets"]] == [key]
    assert f"{key} only" in (out / "report.md").read_text(encoding="utf-8").replace("\\", "")


@pytest.mark.parametrize("args, needle", [
    (["--mixture", "KCl + NaCl"], "KCl"),
    (["NaCl", "--mixture", SYSTEM], "not both"),
    (["--mixture", SYSTEM, "--models", "no-such-model"], "no-such-model"),
])
def test_a_bad_system_is_one_line_and_writes_nothing(mixture_store, run_main, tmp_path, args, needle):
    out = tmp_path / "nothing"
    code, stdout, err = run_main("report", *args, "--out", str(out), store=mixture_store)
    assert code == 2, stdout + err
    assert needle in err and len(err.strip().splitlines()) == 1, err
    assert "Traceback" not in err
    assert not out.exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".nothing")]
