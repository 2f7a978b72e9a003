"""The handbook tables transcribed by script: coverage, the memory they replaced, and the tool.

Check values named here come from the two tables the bundle transcribes:
- [crc-acids-bases-salts] CRC Handbook of Chemistry and Physics, "Activity Coefficients of Acids,
  Bases, and Salts", 25 °C, 0.1 to 1.0 mol/kg (the Robinson-Stokes evaluation);
- [crc-handbook-online] CRC Handbook of Chemistry and Physics, "Mean Activity Coefficients of
  Electrolytes as a Function of Concentration", 25 °C, 2 to 20 mol/kg (Hamer and Wu 1972;
  Staples; Goldberg et al.).
"""

from __future__ import annotations

import csv
import importlib.util
import json
import sys
from decimal import Decimal
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parent.parent
DATASETS = REPO / "refdata" / "datasets"
TOOLS = REPO / "refdata" / "tools"


def _tool():
    spec = importlib.util.spec_from_file_location("transcribe_handbook", TOOLS / "transcribe_handbook.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # its dataclasses look their module up
    spec.loader.exec_module(module)
    return module


def _rows(path: Path) -> list[dict[str, str]]:
    return list(csv.DictReader(line for line in path.read_text(encoding="utf-8").splitlines()
                               if not line.startswith("#")))


def _values(name: str) -> dict[Decimal, str]:
    return {Decimal(r["molality"]).normalize(): r["value"] for r in _rows(DATASETS / name)}


@pytest.fixture(scope="module")
def listing(seeded_store_file: Path) -> list[dict]:
    from click.testing import CliRunner

    from saltbench.cli import cli

    result = CliRunner().invoke(cli, ["--store", str(seeded_store_file), "data", "list", "--format", "json"])
    assert result.exit_code == 0, result.output
    return json.loads(result.stdout)


def test_bundle_covers_the_salts_a_lab_meets(listing: list[dict]) -> None:
    names = {r["electrolyte"] for r in listing}
    assert len(names) >= 80
    # the named salts, acids and bases (all printed in the two tables)
    for salt in ("NaOH", "KOH", "ZnSO4", "CuSO4", "HCl", "HBr", "HI", "HNO3", "HClO4", "MgSO4", "K2SO4",
                 "Na2SO4", "CaCl2", "NaNO3", "KI"):
        assert salt in names, salt
    by_type = {}
    for r in listing:
        by_type.setdefault(r["charge_type"], set()).add(r["electrolyte"])
    assert len(by_type["3-1"]) >= 3
    assert by_type.get("3-2") or by_type.get("2-3")
    # no readable table gives LaCl3 (the README's "What is bundled" says so)
    assert "LaCl3" not in names


def test_every_dataset_says_whether_it_is_transcribed_or_remembered(listing: list[dict]) -> None:
    for r in listing:
        assert r["citations"], r["electrolyte"]
        kinds = {d["typed_as"] for d in r["datasets"]}
        assert kinds <= {"transcribed", "remembered"}, (r["electrolyte"], kinds)
        assert r["n_points_from_memory"] == sum(d["n_points"] for d in r["datasets"] if d["typed_as"] == "remembered")
        assert r["from_memory"] == bool(r["n_points_from_memory"])


def test_known_corrections_of_remembered_values() -> None:
    # K2SO4 gamma± at 0.1/0.2/0.5/0.7 mol/kg, [crc-acids-bases-salts]; the values once typed from
    # memory (0.436, 0.356 at 0.1, 0.2) were wrong
    k2so4 = _values("K2SO4.gamma_pm.crc-acids-bases-salts.csv")
    assert [k2so4[Decimal(m)] for m in ("0.1", "0.2", "0.5", "0.7")] == ["0.441", "0.360", "0.264", "0.232"]
    assert not (DATASETS / "K2SO4.gamma_pm.robinson-stokes-1959.csv").exists()


@pytest.mark.parametrize("name, molality, printed", [
    ("NaOH.gamma_pm.crc-handbook-online.csv", "5", "1.076"),       # [crc-handbook-online]
    ("NaOH.gamma_pm.crc-handbook-online.csv", "20", "19.41"),      # [crc-handbook-online]
    ("CuSO4.gamma_pm.crc-acids-bases-salts.csv", "0.1", "0.150"),  # [crc-acids-bases-salts]
    ("ZnSO4.gamma_pm.crc-acids-bases-salts.csv", "1", "0.0435"),   # [crc-acids-bases-salts]
    ("AlCl3.gamma_pm.crc-acids-bases-salts.csv", "1", "0.539"),    # [crc-acids-bases-salts]
    ("HClO4.gamma_pm.crc-handbook-online.csv", "15", "323"),       # [crc-handbook-online]
])
def test_printed_values_are_bundled_as_printed(name: str, molality: str, printed: str) -> None:
    assert _values(name)[Decimal(molality).normalize()] == printed


def test_remembered_values_agree_with_their_transcription_except_the_named_corrections() -> None:
    ledger = _rows(TOOLS / "memory_replaced.csv")
    assert len(ledger) > 100
    corrected = {"K2SO4"}  # see test_known_corrections_of_remembered_values
    for r in ledger:
        transcribed = _values(r["transcribed_file"])[Decimal(r["molality"]).normalize()]
        # the ledger keeps the value the bundle now holds, and the remembered value it replaced
        assert transcribed == r["transcribed"], r
        gap = abs(float(r["remembered"]) - float(transcribed))
        if r["electrolyte"] in corrected:
            assert gap > 0.002, r
        else:
            # memory held to a unit of the last printed digit (from memory of Robinson and Stokes
            # 1959 and of the handbook): the transcription confirms it
            assert gap <= 0.0015, r


def test_no_remembered_point_stands_where_its_evaluation_is_transcribed() -> None:
    tool = _tool()
    for remembered, transcribed in tool.SAME_EVALUATION.items():
        for path in DATASETS.glob(f"*.gamma_pm.{remembered}.csv"):
            if "# typed: from memory of" not in path.read_text(encoding="utf-8"):
                continue
            twin = DATASETS / path.name.replace(remembered, transcribed)
            if twin.exists():
                assert not set(_values(path.name)) & set(_values(twin.name)), path.name


def test_left_out_salts_are_absent_and_give_a_reason(listing: list[dict]) -> None:
    names = {r["electrolyte"] for r in listing}
    salts, cells = _tool().read_left_out(TOOLS / "left_out.csv")
    assert salts and cells
    for (table, formula), reason in salts.items():
        assert len(reason) > 30
        assert not list(DATASETS.glob(f"{formula}.gamma_pm.crc-acids-bases-salts.csv")) or table != "0.1-1.0"
    for _table, formula, molality in cells:
        path = DATASETS / f"{formula}.gamma_pm.crc-acids-bases-salts.csv"
        assert Decimal(molality).normalize() not in _values(path.name)
        assert molality in path.read_text(encoding="utf-8")  # the note names the cell left out
    assert "K4Fe(CN)6" not in names and "TlClO4" not in names


# -- the tool, on a small table of our own (invented numbers in the copies' layout) -----------

INVENTED = """# an invented table in the layout of the electronic copies
formula,name,CAS,g_0.1,g_0.2,g_0.3,g_0.4
NaCl,Sodium chloride,x,0.778,0.735,0.71,0.693
CsC2H3O2,Cesium acetate,x,0.799,0.771,,0.759
MgSO4,Magnesium sulfate,x,0.150,0.107,0.0874,0.0756
KCl,Potassium chloride,x,0.770,0.718,0.688,0.666
"""


def test_tool_writes_our_format_with_per_point_precision_and_notes(tmp_path: Path) -> None:
    from saltbench.curation.datasets import read_dataset

    tool = _tool()
    shared, out = tmp_path / "shared", tmp_path / "out"
    shared.mkdir()
    out.mkdir()
    (shared / "handbook_gamma_pm_25C_0.1-1.0m.csv").write_text(INVENTED, encoding="utf-8")
    (shared / "handbook_gamma_pm_25C_2-20m.csv").write_text("formula,g_2.0\n", encoding="utf-8")
    left = tmp_path / "left_out.csv"
    left.write_text("table,formula,molality,reason\n0.1-1.0,KCl,,invented reason\n"
                    "0.1-1.0,NaCl,0.4,an invented reason for one cell\n", encoding="utf-8")
    log = tool.transcribe(shared, out, left)
    assert any("left out KCl" in line for line in log)
    nacl = read_dataset(out / "NaCl.gamma_pm.crc-acids-bases-salts.csv")
    assert list(nacl.molality) == [0.1, 0.2, 0.3]  # 0.4 left out, and the note says why
    assert "invented reason for one cell" in nacl.note
    assert "'0.71' at 0.3 mol/kg" in nacl.note  # a dropped trailing zero is named
    assert nacl.typed.startswith("transcribed from the CRC Handbook")
    acetate = read_dataset(out / "CsCH3COO.gamma_pm.crc-acids-bases-salts.csv")
    assert "printed as CsC2H3O2" in acetate.note and len(acetate.molality) == 3
    mgso4 = read_dataset(out / "MgSO4.gamma_pm.crc-acids-bases-salts.csv")
    assert list(mgso4.point_precision) == [0.001, 0.001, 0.0001, 0.0001]
    assert not (out / "KCl.gamma_pm.crc-acids-bases-salts.csv").exists()


def test_tool_replaces_remembered_points_and_keeps_them_in_a_ledger(tmp_path: Path) -> None:
    tool = _tool()
    out = tmp_path / "out"
    out.mkdir()
    head = ("# saltbench dataset 1\n# electrolyte: NaCl\n# property: gamma_pm\n# temperature: 25 C\n"
            "# source: {src}\n# table: t\n# precision: 0.001\n# uncertainty: 0.002\n# typed: {typed}\n")
    (out / "NaCl.gamma_pm.robinson-stokes-1959.csv").write_text(
        head.format(src="robinson-stokes-1959", typed="from memory of an invented book; verify against the "
                    "original before use in a regulated method")
        + "molality,value\n0.1,0.777\n0.2,0.735\n1.2,0.654\n1.4,0.655\n1.6,0.658\n", encoding="utf-8")
    (out / "NaCl.gamma_pm.crc-acids-bases-salts.csv").write_text(
        head.format(src="crc-acids-bases-salts", typed="transcribed from an invented table")
        + "molality,value\n0.1,0.778\n0.2,0.735\n", encoding="utf-8")
    ledger = tmp_path / "ledger.csv"
    log = tool.replace_memory(out, ledger)
    assert log == ["cut NaCl.gamma_pm.robinson-stokes-1959.csv to 3 remembered points (2 replaced)"]
    kept = (out / "NaCl.gamma_pm.robinson-stokes-1959.csv").read_text(encoding="utf-8")
    assert "0.1,0.777" not in kept and "1.2,0.654" in kept and "replaced by the transcription" in kept
    rows = _rows(ledger)
    assert [(r["molality"], r["remembered"], r["transcribed"]) for r in rows] == [("0.1", "0.777", "0.778"),
                                                                                  ("0.2", "0.735", "0.735")]
    assert tool.replace_memory(out, ledger) == []  # a second run changes nothing
