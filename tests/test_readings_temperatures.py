"""An EMF series at several temperatures (issue 21, item 7): readings with a ``temperature``
column reduce at each temperature, with E°(T) found by the one-temperature extrapolation and the
Nernst factor of that temperature, to one gamma± dataset with each point's temperature.

Synthetic readings, generator stated here (an invented series, not measurements): the Harned
cell Pt | H2 | HCl(m) | AgCl | Ag, E = E°(T) - (2 R T / F) ln(m gamma±) (Harned and Owen, The
Physical Chemistry of Electrolytic Solutions, 3rd ed., 1958, ch. 11), R and F the CODATA 2018
values typed below, with
    E°(T) = 0.22234 V - 6.4e-4 V/K (T - 298.15 K) - 3.2e-6 V/K² (T - 298.15 K)²
(0.22234 V at 25 °C from memory of Bates and Bower, J. Res. NBS 53, 283 (1954); the two
temperature coefficients are invented for this test), and
    ln gamma± = -A_gamma(T) sqrt(m) / (1 + B(T) 4.3 Å sqrt(m)) + b(T) m,  b(T) = 0.12 + 5e-4 (T - 298.15)
with A_gamma and B of water at T from saltbench.water (checked against published tables in
test_water.py), plus Gaussian noise of 0.02 mV on each reading from a fixed seed.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from conftest import write

from saltbench.curation.readings import read_readings
from saltbench.measurements.reduce import reduce_set
from saltbench.water.debye_huckel import debye_huckel_constants

R = 8.314462618  # J/(K mol), CODATA 2018 (exact since the 2019 SI)
F = 96485.33212  # C/mol, CODATA 2018 (exact since the 2019 SI)
TEMPS = (288.15, 298.15, 313.15, 323.15)
M = np.array([0.001, 0.002, 0.003, 0.005, 0.007, 0.01, 0.02, 0.03, 0.05, 0.07, 0.1, 0.2, 0.5, 1.0])
NOISE_V = 2e-5
BIB = """[harrowgate-cells-2026]
authors: Harrowgate Thermostat Bench
title: Invented thermostatted cell series (test scenario, invented values)
publisher: saltbench test scenario (invented)
year: 2026
"""


def e_standard(t: float) -> float:
    d = t - 298.15
    return 0.22234 - 6.4e-4 * d - 3.2e-6 * d * d


def ln_gamma(m: np.ndarray, t: float) -> np.ndarray:
    dh = debye_huckel_constants(t)
    b = 0.12 + 5e-4 * (t - 298.15)
    return -dh.a_gamma * np.sqrt(m) / (1 + dh.b_gamma_per_angstrom * 4.3 * np.sqrt(m)) + b * m


def emf(m: np.ndarray, t: float) -> np.ndarray:
    return e_standard(t) - 2 * R * t / F * (np.log(m) + ln_gamma(m, t))


def readings_text(seed: int) -> str:
    rng = np.random.default_rng(seed)
    rows = []
    for t in TEMPS:
        e = emf(M, t) + rng.normal(0.0, NOISE_V, M.size)
        rows += [f"{m:g},{t - 273.15:g} C,{v * 1000:.4f}" for m, v in zip(M, e)]
    rng.shuffle(rows)  # the order of the rows is no part of the meaning
    return """# saltbench readings 1
# kind: emf
# id: harrowgate-hcl
# electrolyte: HCl
# temperature: 25 C
# source: harrowgate-cells-2026
# typed: measured at the invented Harrowgate thermostat bench (invented values)
# cell: Pt | H2 | HCl(m) | AgCl | Ag
# e_standard: extrapolate
# u_emf: 0.02 mV
molality,temperature,emf_mv
""" + "\n".join(rows) + "\n"


@pytest.mark.parametrize("seed", [11, 12, 13, 14, 15])
def test_e_standard_is_recovered_at_each_temperature(tmp_path: Path, seed: int) -> None:
    red = reduce_set(read_readings(write(tmp_path / "cell.csv", readings_text(seed))))
    rows = red.details["e_standard_by_temperature"]
    assert [r["temperature_k"] for r in rows] == pytest.approx(list(TEMPS))
    for r in rows:
        t = r["temperature_k"]
        # within 3 standard uncertainties of the generator's E°(T) (k = 3: 99.7 % for a normal error)
        assert abs(r["e_standard_v"] - e_standard(t)) < 3 * r["u_e_standard_v"], (t, r)
        assert 1e-6 < r["u_e_standard_v"] < 1e-4
        # the Nernst slope R T / F from CODATA: 25.693 mV at 25 °C
        assert r["nernst_slope_v"] == pytest.approx(R * t / F, rel=1e-9)
        assert r["k_v"] == pytest.approx(2 * R * t / F, rel=1e-9)
        assert r["n_readings"] == M.size and r["n_extrapolation"] == 11
    assert rows[1]["nernst_slope_v"] == pytest.approx(0.025693, abs=5e-7)


def test_coverage_of_the_e_standard_uncertainty(tmp_path: Path) -> None:
    # 20 seeds x 4 temperatures: |error| < u(E°) about 68 % of the time if u(E°) is honest
    inside = []
    for seed in range(100, 120):
        red = reduce_set(read_readings(write(tmp_path / f"c{seed}.csv", readings_text(seed))))
        for r in red.details["e_standard_by_temperature"]:
            inside.append(abs(r["e_standard_v"] - e_standard(r["temperature_k"])) < r["u_e_standard_v"])
    assert 0.5 <= np.mean(inside) <= 0.85, np.mean(inside)


def test_gamma_at_each_point_and_its_temperature(tmp_path: Path) -> None:
    red = reduce_set(read_readings(write(tmp_path / "cell.csv", readings_text(7))))
    assert red.property == "gamma_pm" and red.temperature_k is not None
    assert sorted(set(np.round(red.temperature_k, 2))) == list(TEMPS)
    for t in TEMPS:
        sel = np.abs(red.temperature_k - t) < 0.01
        np.testing.assert_allclose(red.molality[sel], M)
        truth = np.exp(ln_gamma(M, t))
        # within 3 standard uncertainties (u includes the common u(E°) of that temperature)
        assert np.all(np.abs(red.value[sel] - truth) < 3 * red.u_value[sel]), t
    assert [e.temperature_k for e in red.extrapolations] == pytest.approx(list(TEMPS))


def test_one_temperature_files_reduce_as_before(tmp_path: Path) -> None:
    text = readings_text(3)
    rows = [r for r in text.splitlines()[12:] if ",25 C," in r]
    plain = text.split("molality,temperature,emf_mv\n")[0] + "molality,emf_mv\n" + "\n".join(
        r.replace(",25 C,", ",") for r in rows) + "\n"
    a = reduce_set(read_readings(write(tmp_path / "plain.csv", plain)))
    assert a.temperature_k is None and a.extrapolation is not None
    b = reduce_set(read_readings(write(tmp_path / "multi.csv", text)))
    sel = np.abs(b.temperature_k - 298.15) < 0.01
    # the same readings at 25 °C give the same E° and gamma±, alone or among other temperatures
    at_25 = b.details["e_standard_by_temperature"][1]
    assert at_25["e_standard_v"] == pytest.approx(a.details["e_standard_v"], abs=1e-12)
    np.testing.assert_allclose(b.value[sel], a.value, rtol=1e-12)


def test_given_e_standard_is_refused_at_several_temperatures(tmp_path: Path) -> None:
    from saltbench.errors import UserError

    text = readings_text(3).replace("# e_standard: extrapolate", "# e_standard: 0.22234 V")
    with pytest.raises(UserError, match="readings at several temperatures need E° at each"):
        reduce_set(read_readings(write(tmp_path / "cell.csv", text)))


def test_reduction_is_stored_with_each_points_temperature(run_main, store_path: Path, tmp_path: Path) -> None:
    bib = write(tmp_path / "cells.sources.txt", BIB)
    f = write(tmp_path / "harrowgate-hcl.csv", readings_text(5))
    code, _, err = run_main("readings", "add", str(bib), str(f), store=store_path)
    assert code == 0, err
    code, out, err = run_main("readings", "reduce", "harrowgate-hcl", "--format", "json", store=store_path)
    assert code == 0, err
    [rec] = json.loads(out)
    assert [r["temperature_k"] for r in rec["details"]["e_standard_by_temperature"]] == pytest.approx(list(TEMPS))
    assert {round(p["temperature_k"], 2) for p in rec["points"]} == set(TEMPS)
    code, out, _ = run_main("readings", "reduce", "harrowgate-hcl", store=store_path)
    assert "E°/V" in out and "RT/F/mV" in out and "25.6926" in out
    code, out, _ = run_main("data", "show", "HCl", "--format", "json", store=store_path)
    pts = [p for p in json.loads(out)["points"] if p["dataset"] == rec["dataset"]]
    assert len(pts) == M.size * len(TEMPS)
    assert {round(p["temperature_k"], 2) for p in pts} == set(TEMPS)
    [ds] = [d for d in json.loads(out)["datasets"] if d["key"] == rec["dataset"]]
    assert (ds["t_min_k"], ds["t_max_k"]) == pytest.approx((288.15, 323.15))
    # the point rows the fit selects from carry each point's temperature
    from saltbench.store import open_store
    from saltbench.store.queries import point_rows

    store = open_store(store_path)
    rows = [r for r in point_rows(store, "HCl") if r["dataset"] == rec["dataset"]]
    store.close()
    assert sorted({round(r["temperature_k"], 2) for r in rows}) == list(TEMPS)
    code, out, err = run_main("readings", "show", "harrowgate-hcl", store=store_path)
    assert code == 0, err
    code, _, err = run_main("readings", "show", "harrowgate-hcl", "--plot", str(tmp_path / "p.png"), store=store_path)
    assert code == 2 and "several temperatures" in err


EXAMPLE = Path(__file__).resolve().parents[1] / "refdata" / "examples" / "readings-kestrel-bay-thermostat"
SCRIPT = Path(__file__).resolve().parents[1] / "refdata" / "tools" / "make_thermostat_readings_example.py"


def test_the_invented_thermostat_example_reduces_back_to_its_generator(run_main, store_path: Path) -> None:
    import importlib.util

    spec = importlib.util.spec_from_file_location("make_thermostat_readings_example", SCRIPT)
    assert spec is not None and spec.loader is not None
    script = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(script)
    # the files are what the script writes, and say they are invented
    assert (EXAMPLE / script.NAME).read_text(encoding="utf-8") == script.text()
    assert (EXAMPLE / script.BIB_NAME).read_text(encoding="utf-8") == script.BIB
    assert (EXAMPLE / "README.md").read_text(encoding="utf-8") == script.README
    assert "INVENTED" in script.text() and "INVENTED" in script.BIB and "INVENTED" in script.README
    # the commands the example's README gives
    code, _, err = run_main("readings", "add", str(EXAMPLE), store=store_path)
    assert code == 0, err
    code, out, err = run_main("readings", "reduce", "kestrel-hcl-thermostat", "--format", "json", store=store_path)
    assert code == 0, err
    [rec] = json.loads(out)
    rows = rec["details"]["e_standard_by_temperature"]
    assert [r["temperature_k"] for r in rows] == pytest.approx([288.15, 298.15, 313.15])
    for r in rows:  # the generator's stated E°(T), within 3 standard uncertainties
        assert abs(r["e_standard_v"] - script.e_standard(r["temperature_k"])) < 3 * r["u_e_standard_v"]
    for t in (288.15, 298.15, 313.15):
        pts = [p for p in rec["points"] if abs(p["temperature_k"] - t) < 0.01]
        m = np.array([p["molality"] for p in pts])
        got, u = np.array([p["value"] for p in pts]), np.array([p["uncertainty"] for p in pts])
        assert np.all(np.abs(got - np.exp(script.ln_gamma(m, t))) < 3 * u)
    code, out, err = run_main("data", "show", "HCl", store=store_path)
    assert code == 0 and "kestrel-hcl-thermostat.gamma_pm" in out and "3 temperatures, 288.15 to 313.15 K" in out


def test_readings_list_shows_the_range_of_a_series(run_main, store_path: Path, tmp_path: Path) -> None:
    bib = write(tmp_path / "cells.sources.txt", BIB)
    code, _, err = run_main("readings", "add", str(bib), str(write(tmp_path / "c.csv", readings_text(5))),
                            store=store_path)
    assert code == 0, err
    code, out, _ = run_main("readings", "list", "--format", "json", store=store_path)
    [rec] = json.loads(out)
    assert (rec["temperature_k"], rec["t_min_k"], rec["t_max_k"]) == (298.15, 288.15, 323.15)
    code, out, _ = run_main("readings", "list", store=store_path)
    assert "288.15-323.15" in out
