"""``saltbench data list/show/export/check`` on the bundled data, as scripts see them."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest
from conftest import REFDATA, bundle_copy

# Electrolytes every release bundles with both gamma± and osmotic data (refdata/datasets).
BUNDLED_CORE = {"NaCl", "KCl", "CaCl2", "MgSO4"}


def test_list_json_gives_bundled_electrolytes_with_citations(run_cli, seeded_store: Path) -> None:
    code, out, err = run_cli("data", "list", "--format", "json", store=seeded_store)
    assert (code, err) == (0, "")
    rows = json.loads(out)
    by_name = {r["electrolyte"]: r for r in rows}
    assert BUNDLED_CORE <= set(by_name)
    for r in rows:
        assert r["sources"], r["electrolyte"]
        assert [c["source"] for c in r["citations"]] == r["sources"]
        for c in r["citations"]:
            assert c["citation"] and c["citation"].endswith((".", ")")) or "doi:" in c["citation"]
    nacl = by_name["NaCl"]
    assert "robinson-stokes-1959" in nacl["sources"]
    rs = next(c for c in nacl["citations"] if c["source"] == "robinson-stokes-1959")
    # Robinson, R. A.; Stokes, R. H., Electrolyte Solutions, 2nd ed., Butterworths, 1959
    # (common practice, no source: the standard citation of the book).
    assert "Robinson" in rs["citation"] and "Electrolyte Solutions" in rs["citation"]
    assert "1959" in rs["citation"]
    assert nacl["charge_type"] == "1-1"
    assert by_name["CaCl2"]["charge_type"] == "2-1"
    assert by_name["MgSO4"]["charge_type"] == "2-2"
    assert set(nacl["properties"]) >= {"gamma_pm", "osmotic"}


def test_list_table_warns_about_values_typed_from_memory(run_cli, seeded_store: Path) -> None:
    code, out, _ = run_cli("data", "list", store=seeded_store)
    assert code == 0
    nacl_line = next(line for line in out.splitlines() if line.startswith("NaCl "))
    assert " (verify)" in nacl_line  # how many of its points were typed from memory
    cacl2 = next(line for line in out.splitlines() if line.startswith("CaCl2 "))
    assert f"{_remembered_points('CaCl2')} (verify)" in cacl2
    koh = next(line for line in out.splitlines() if line.startswith("KOH "))
    assert "verify" not in koh  # transcribed only


def _remembered_points(electrolyte: str) -> int:
    """Points of the bundled files typed from memory, counted off the files themselves."""
    n = 0
    for path in (REFDATA / "datasets").glob(f"{electrolyte}.*.csv"):
        text = path.read_text(encoding="utf-8")
        if "# typed: from memory of" in text:
            n += sum(1 for line in text.splitlines()[1:] if line and not line.startswith(("#", "molality")))
    return n


def test_show_json_points_carry_their_context(run_cli, seeded_store: Path) -> None:
    code, out, _ = run_cli("data", "show", "NaCl", "--format", "json", store=seeded_store)
    assert code == 0
    doc = json.loads(out)
    assert doc["electrolyte"] == "NaCl"
    assert doc["points"]
    for p in doc["points"]:
        assert {"electrolyte", "property", "molality", "value", "temperature_k", "source"} <= set(p)
        assert p["electrolyte"] == "NaCl"
        assert p["molality"] > 0 and p["value"] > 0
    rs = [p for p in doc["points"] if p["source"] == "crc-acids-bases-salts" and p["property"] == "gamma_pm"]
    # gamma±(NaCl, 1.0 mol/kg, 25 °C) = 0.657: CRC Handbook, "Activity Coefficients of Acids,
    # Bases, and Salts" (the Robinson-Stokes evaluation), as printed.
    one = [p for p in rs if p["molality"] == 1.0]
    assert len(one) == 1 and one[0]["value"] == 0.657
    # 25 °C = 298.15 K (ITS-90 offset; common practice, no source).
    assert one[0]["temperature_k"] == pytest.approx(298.15)
    keys = {d["key"] for d in doc["datasets"]}
    assert {"NaCl.gamma_pm.robinson-stokes-1959", "NaCl.gamma_pm.crc-acids-bases-salts"} <= keys


def test_show_unknown_electrolyte_is_a_user_error(run_main, seeded_store: Path) -> None:
    code, out, err = run_main("data", "show", "Unobtainium", store=seeded_store)
    assert code == 2 and out == ""
    assert err.startswith("Error: no data for electrolyte 'Unobtainium' in the store; known: ")
    assert "NaCl" in err and err.count("\n") == 1


def test_export_csv_header_and_rows(run_cli, seeded_store: Path) -> None:
    code, out, _ = run_cli("data", "export", "NaCl", "KCl", "--format", "csv", store=seeded_store)
    assert code == 0
    reader = csv.DictReader(io.StringIO(out))
    assert reader.fieldnames == ["electrolyte", "property", "molality", "value", "uncertainty",
                                 "temperature_k", "source", "dataset", "origin"]
    rows = list(reader)
    assert {r["electrolyte"] for r in rows} == {"NaCl", "KCl"}
    assert all(float(r["molality"]) > 0 and float(r["uncertainty"]) > 0 for r in rows)


def test_export_matches_show(run_cli, seeded_store: Path) -> None:
    _, out_csv, _ = run_cli("data", "export", "NaCl", "--format", "csv", store=seeded_store)
    _, out_json, _ = run_cli("data", "show", "NaCl", "--format", "json", store=seeded_store)
    exported = [(r["dataset"], float(r["molality"]), float(r["value"]))
                for r in csv.DictReader(io.StringIO(out_csv))]
    shown = [(p["dataset"], p["molality"], p["value"]) for p in json.loads(out_json)["points"]]
    assert sorted(exported) == sorted(shown)


def test_check_passes_on_the_bundled_data(run_cli, seeded_store: Path) -> None:
    code, out, _ = run_cli("data", "check", store=seeded_store)
    assert code == 0, out
    assert out.strip().splitlines()[-2].endswith("checks passed")
    assert "too far from their neighbours to be judged" in out.strip().splitlines()[-1]


def test_check_passes_on_an_unaltered_copy_of_the_bundle(run_cli, store_path: Path, tmp_path: Path,
                                                         monkeypatch: pytest.MonkeyPatch) -> None:
    """Control for the next test: the copy itself is clean for NaCl."""
    bundle_copy(tmp_path, monkeypatch)
    code, out, _ = run_cli("data", "check", "NaCl", store=store_path)
    assert code == 0, out


def test_check_names_a_copying_slip(run_cli, store_path: Path, tmp_path: Path,
                                    monkeypatch: pytest.MonkeyPatch) -> None:
    root = bundle_copy(tmp_path, monkeypatch)
    target = root / "datasets" / "NaCl.gamma_pm.crc-acids-bases-salts.csv"
    lines = target.read_text(encoding="utf-8").splitlines(keepends=True)
    # gamma±(NaCl, 0.7 mol/kg) = 0.667 (CRC Handbook, "Activity Coefficients of Acids, Bases, and
    # Salts", as printed); the slip turns it into 0.677, one unit too many in the second decimal.
    n = next(i for i, line in enumerate(lines) if line.startswith("0.7,"))
    assert lines[n].split(",")[:2] == ["0.7", "0.667"]
    lines[n] = lines[n].replace("0.7,0.667", "0.7,0.677")
    target.write_text("".join(lines), encoding="utf-8")
    line_no = n + 1

    code, out, _ = run_cli("data", "check", "NaCl", store=store_path)
    assert code == 1
    flagged = [line for line in out.splitlines()
               if line.startswith(f"NaCl.gamma_pm.crc-acids-bases-salts.csv:{line_no}: ")]
    assert flagged, out
    assert all("m = 0.7 mol/kg" in line for line in flagged)
    assert any("flagged point(s)" in line for line in out.splitlines()[-2:])

    code, out, _ = run_cli("data", "check", "NaCl", "--format", "json", store=store_path)
    assert code == 1
    doc = json.loads(out)
    assert doc["ok"] is False
    assert any(f["file"] == "NaCl.gamma_pm.crc-acids-bases-salts.csv" and f["line"] == line_no
               and f["molality"] == pytest.approx(0.7) for f in doc["findings"])


def test_list_by_charge_type(run_cli, run_main, seeded_store: Path) -> None:
    code, out, _ = run_cli("data", "list", "--type", "2-2", "--format", "json", store=seeded_store)
    assert code == 0
    names = {r["electrolyte"] for r in json.loads(out)}
    # every 2-2 sulfate of the handbook's 0.1-1.0 mol/kg table (CRC Handbook, "Activity
    # Coefficients of Acids, Bases, and Salts")
    assert names == {"BeSO4", "CdSO4", "CuSO4", "MgSO4", "MnSO4", "NiSO4", "UO2SO4", "ZnSO4"}
    code, out, err = run_main("data", "list", "--type", "4-4", store=seeded_store)
    assert code == 2 and err.count("\n") == 1 and "--type" in err and "2-2" in err
