"""A user's own electrolyte, with a cation no table knows, through add, list, show and re-add.

Scenario of our own: the invented "Qx" cation of an invented quaternary-ammonium-like salt QxCl,
studied by the invented Saltmarsh Pilot Plant laboratory. Charge, molar mass and every value
below are invented for this test; none is a property of a real substance.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from conftest import write

from saltbench.store import open_store
from saltbench.store.queries import content_hash

BIB = """\
[saltmarsh-pilot-2026]
authors: Saltmarsh Pilot Plant Laboratory
title: Invented isopiestic series on QxCl (test scenario, invented values)
publisher: saltbench test scenario (invented)
year: 2026
note: invented source for a test scenario; not a real publication
"""

# Invented: charge +1 and molar mass 130.2 g/mol of the invented ion Qx.
DATA = """\
# saltbench dataset 1
# electrolyte: QxCl
# cation: Qx, charge +1, molar mass 130.2 g/mol
# anion: Cl, charge -1
# property: osmotic
# temperature: 25 C
# source: saltmarsh-pilot-2026
# table: series A (invented)
# precision: 0.001
# uncertainty: 0.005
# typed: measured by the invented Saltmarsh Pilot Plant laboratory (invented values)
molality,value
0.1,0.930
0.5,0.905
1.0,0.900
"""


@pytest.fixture
def files(tmp_path: Path) -> tuple[Path, Path]:
    return (write(tmp_path / "user" / "saltmarsh.sources.txt", BIB),
            write(tmp_path / "user" / "QxCl.osmotic.saltmarsh.csv", DATA))


def _hash(path: Path) -> str:
    s = open_store(path)
    try:
        return content_hash(s)
    finally:
        s.close()


def test_user_electrolyte_is_added_listed_and_shown(files, seeded_store: Path, run_main) -> None:
    bib, data = files
    code, out, err = run_main("data", "add", str(bib), str(data), store=seeded_store)
    assert (code, err) == (0, "")
    assert out.splitlines() == ["added     source saltmarsh-pilot-2026",
                                "added     dataset QxCl.osmotic.saltmarsh"]

    code, out, _ = run_main("data", "list", "--format", "json", store=seeded_store)
    assert code == 0
    rows = {r["electrolyte"]: r for r in json.loads(out)}
    qx = rows["QxCl"]
    assert qx["charge_type"] == "1-1"
    assert qx["origin"] == "user"
    assert qx["sources"] == ["saltmarsh-pilot-2026"]
    assert qx["n_points"] == 3 and qx["properties"] == ["osmotic"]
    assert qx["citations"][0]["citation"].startswith("Saltmarsh Pilot Plant Laboratory. Invented")
    assert "NaCl" in rows  # the bundled data are still listed beside it

    code, out, _ = run_main("data", "show", "QxCl", "--format", "json", store=seeded_store)
    assert code == 0
    shown = json.loads(out)
    assert shown["electrolyte"] == "QxCl"
    assert [p["molality"] for p in shown["points"]] == [0.1, 0.5, 1.0]
    assert [p["value"] for p in shown["points"]] == [0.930, 0.905, 0.900]
    assert {p["source"] for p in shown["points"]} == {"saltmarsh-pilot-2026"}

    s = open_store(seeded_store)
    try:
        ion = s.conn.execute("SELECT charge, molar_mass, origin FROM ions WHERE formula = 'Qx'").fetchone()
        salt = s.conn.execute("SELECT molar_mass FROM electrolytes WHERE name = 'QxCl'").fetchone()
    finally:
        s.close()
    assert ion == (1, pytest.approx(0.1302), "user")
    # M(QxCl) = 130.2 g/mol (invented) + M(Cl) 35.45 g/mol (IUPAC standard atomic weight of
    # chlorine, conventional value 35.45; from memory of the IUPAC 2013 table).
    assert salt[0] == pytest.approx(0.1302 + 0.03545, abs=2e-5)


def test_show_is_case_insensitive_for_the_user_electrolyte(files, seeded_store: Path, run_main) -> None:
    bib, data = files
    run_main("data", "add", str(bib), str(data), store=seeded_store)
    code, out, _ = run_main("data", "show", "qxcl", "--format", "json", store=seeded_store)
    assert code == 0 and json.loads(out)["electrolyte"] == "QxCl"


def test_re_adding_the_same_file_is_a_no_op(files, seeded_store: Path, run_main) -> None:
    bib, data = files
    run_main("data", "add", str(bib), str(data), store=seeded_store)
    h = _hash(seeded_store)
    code, out, err = run_main("data", "add", str(bib), str(data), "--format", "json", store=seeded_store)
    assert (code, err) == (0, "")
    assert json.loads(out) == {"added": [], "updated": [],
                               "unchanged": ["source saltmarsh-pilot-2026",
                                             "dataset QxCl.osmotic.saltmarsh"]}
    assert _hash(seeded_store) == h


def test_editing_and_re_adding_updates_in_place(files, seeded_store: Path, run_main) -> None:
    bib, data = files
    run_main("data", "add", str(bib), str(data), store=seeded_store)
    h = _hash(seeded_store)
    data.write_text(DATA.replace("0.5,0.905", "0.5,0.907").replace("1.0,0.900\n", "1.0,0.900\n2.0,0.915\n"),
                    encoding="utf-8")
    code, out, _ = run_main("data", "add", str(bib), str(data), "--format", "json", store=seeded_store)
    assert code == 0
    assert json.loads(out)["updated"] == ["dataset QxCl.osmotic.saltmarsh"]
    assert _hash(seeded_store) != h

    code, out, _ = run_main("data", "show", "QxCl", "--format", "json", store=seeded_store)
    shown = json.loads(out)
    assert len(shown["datasets"]) == 1
    assert [(p["molality"], p["value"]) for p in shown["points"]] == [
        (0.1, 0.930), (0.5, 0.907), (1.0, 0.900), (2.0, 0.915)]


def test_redeclaring_the_ion_with_another_charge_is_refused(files, seeded_store: Path, tmp_path: Path,
                                                             run_main) -> None:
    bib, data = files
    run_main("data", "add", str(bib), str(data), store=seeded_store)
    h = _hash(seeded_store)
    other = write(tmp_path / "user" / "QxCl2.csv",
                  DATA.replace("electrolyte: QxCl", "electrolyte: QxCl2")
                  .replace("Qx, charge +1", "Qx, charge +2"))
    code, out, err = run_main("data", "add", str(other), store=seeded_store)
    assert code == 2 and out == ""
    assert err.startswith(f"Error: {other}: field 'cation': ion Qx is already in the store with charge +1")
    assert _hash(seeded_store) == h


def test_an_undeclared_unknown_ion_asks_for_its_declaration(tmp_path: Path, seeded_store: Path,
                                                            run_main) -> None:
    bad = write(tmp_path / "user" / "q.csv",
                DATA.replace("# cation: Qx, charge +1, molar mass 130.2 g/mol\n", ""))
    bib = write(tmp_path / "user" / "b.txt", BIB)
    code, _, err = run_main("data", "add", str(bib), str(bad), store=seeded_store)
    assert code == 2
    assert err.startswith(f"Error: {bad}:2: field 'electrolyte': cannot read electrolyte formula 'QxCl'")
    assert "declare an ion saltbench does not know in this file's header" in err
