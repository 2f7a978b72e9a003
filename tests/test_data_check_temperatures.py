"""``data check`` at several temperatures (issue 21, item 1): points are compared only with
points at their own temperature, each finding names it, and ln gamma± at two temperatures is
held to the Gibbs-Helmholtz relation where L_phi data exist.

Scenario of our own: the invented salt QxCl of the invented Harrowgate thermostat bench. Every
value is synthetic, made by the generators stated below (not measurements):
- activity:  ln gamma±(m, T) = -1.1744 sqrt(m) / (1 + sqrt(m)) + b(T) m
                               + (L_2(m) / (nu R)) (1/T - 1/298.15)
  with b(T) = 0.10 + 0.002 (T - 298.15) kg/mol, nu = 2;
- enthalpy:  L_phi(m) = 1000 sqrt(m) - 1500 m J/mol, so L_2 = 1500 sqrt(m) - 3000 m J/mol,
so the generated ln gamma± obeys d ln gamma±/dT = -L_2 / (nu R T^2) apart from the b(T) term,
which the consistent test sets to zero. The relation itself: Robinson and Stokes, Electrolyte
Solutions, 2nd ed. (1959), ch. 2; R from CODATA 2018 (8.314462618 J/(K mol)).
"""

from __future__ import annotations

import numpy as np
import pytest
from conftest import write

from saltbench.api import Session, check_data
from saltbench.curation.thermal_checks import l2_from_l_phi, smooth_l_phi
from saltbench.store import ingest

R = 8.314462618  # J/(K mol), CODATA 2018
BIB = """\
[harrowgate-2026]
authors: Harrowgate Thermostat Bench
title: Invented activity and calorimetric series on QxCl (test scenario, invented values)
publisher: saltbench test scenario (invented)
year: 2026
"""
GRID = [0.01, 0.02, 0.05, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0, 1.2, 1.4, 1.6, 1.8, 2.0]
TEMPS = (288.15, 298.15, 313.15)


def head(prop: str, extra: str = "", precision: str = "0.001", uncertainty: str = "0.001") -> str:
    return f"""\
# saltbench dataset 1
# electrolyte: QxCl
# cation: Qx, charge +1, molar mass 130.2 g/mol
# anion: Cl, charge -1
# property: {prop}
{extra}# temperature: 25 C
# source: harrowgate-2026
# table: synthetic series (invented; generator in the test's docstring)
# precision: {precision}
# uncertainty: {uncertainty}
# typed: measured at the invented Harrowgate thermostat bench (invented values)
"""


def l2(m: np.ndarray) -> np.ndarray:
    return 1500.0 * np.sqrt(m) - 3000.0 * m


def ln_gamma(m: np.ndarray, t: float, db_dt: float = 0.0, l2_sign: float = 1.0) -> np.ndarray:
    b = 0.10 + db_dt * (t - 298.15)
    return (-1.1744 * np.sqrt(m) / (1 + np.sqrt(m)) + b * m
            + l2_sign * l2(m) / (2 * R) * (1 / t - 1 / 298.15))


def activity_file(db_dt: float = 0.0, l2_sign: float = 1.0, slip: tuple[float, float] | None = None) -> str:
    rows = []
    for t in TEMPS:
        for m in GRID:
            g = float(np.exp(ln_gamma(np.array(m), t, db_dt, l2_sign)))
            if slip == (t, m):
                g += 0.02  # a copying slip: the second decimal one unit off
            rows.append(f"{m},{t} K,{g:.3f}")
    return head("gamma_pm") + "molality,temperature,value\n" + "\n".join(rows) + "\n"


def lphi_file(sign: float = 1.0) -> str:
    m = np.array([0.01, 0.05, 0.1, 0.2, 0.5, 1.0, 1.5, 2.0])
    v = sign * (1000 * np.sqrt(m) - 1500 * m)
    return (head("L_phi", "# unit: J/mol\n", precision="0.1", uncertainty="2") + "molality,value\n"
            + "\n".join(f"{a},{b:.1f}" for a, b in zip(m, v)) + "\n")


def _check(tmp_path, memory_store, *files: str):
    paths = [write(tmp_path / "h.sources.txt", BIB)]
    paths += [write(tmp_path / f"qxcl-{i}.csv", text) for i, text in enumerate(files)]
    ingest(memory_store, paths)
    return check_data(Session(memory_store, seed=False), ["QxCl"])


def test_points_are_compared_only_at_their_own_temperature(tmp_path, memory_store) -> None:
    # b(T) changes by 0.05 kg/mol over 15-40 °C: pooled across temperatures, the 2 mol/kg points
    # would sit 0.1 apart in ln gamma±; each temperature alone is smooth to its printed digit
    rep = _check(tmp_path, memory_store, activity_file(db_dt=0.002))
    assert [f for f in rep.findings if f.check == "neighbours"] == []
    near = [r for r in rep.summary if r["check"] == "neighbours"]
    assert sorted(r["temperature_k"] for r in near) == list(TEMPS)
    assert all(r["n_points"] == len(GRID) for r in near)


def test_a_slip_is_named_with_its_temperature(tmp_path, memory_store) -> None:
    rep = _check(tmp_path, memory_store, activity_file(db_dt=0.002, slip=(313.15, 0.6)))
    [f] = [f for f in rep.findings if f.check == "neighbours"]
    assert (f.temperature_k, f.molality) == (313.15, 0.6)
    # its line: 11 header lines and the column names, then two temperatures' rows before it
    assert f.line == 13 + 2 * len(GRID) + GRID.index(0.6)


def test_smooth_l_phi_recovers_l2_of_its_generator() -> None:
    m = np.array([0.01, 0.05, 0.1, 0.2, 0.5, 1.0, 1.5, 2.0])
    coef, cov, _ = smooth_l_phi(m, 1000 * np.sqrt(m) - 1500 * m, np.full(m.size, 2.0))
    got, u = l2_from_l_phi(coef, cov, m)
    np.testing.assert_allclose(got, l2(m), atol=1e-6)  # L_2 = L_phi + m dL_phi/dm, done by hand
    assert np.all(u > 0)


def test_consistent_thermal_data_pass_gibbs_helmholtz(tmp_path, memory_store) -> None:
    rep = _check(tmp_path, memory_store, activity_file(), lphi_file())
    gh = [r for r in rep.summary if r["check"] == "gibbs-helmholtz"]
    assert [(r["from_temperature_k"], r["temperature_k"]) for r in gh] == [(288.15, 298.15), (298.15, 313.15)]
    assert all(r["n_points"] == len(GRID) for r in gh)
    assert [f for f in rep.findings if f.check == "gibbs-helmholtz"] == []
    assert max(r["worst_ratio"] for r in gh) < 0.6


def test_enthalpies_of_the_wrong_sign_are_flagged(tmp_path, memory_store) -> None:
    rep = _check(tmp_path, memory_store, activity_file(), lphi_file(sign=-1.0))
    found = [f for f in rep.findings if f.check == "gibbs-helmholtz"]
    assert found and {f.temperature_k for f in found} == {298.15, 313.15}
    # the effect grows with |L_2|: every point at 1.4 mol/kg and above is caught in both intervals
    assert {(f.temperature_k, f.molality) for f in found} >= {(t, m) for t in (298.15, 313.15)
                                                             for m in GRID if m >= 1.4}


def test_without_two_temperatures_the_check_says_why(tmp_path, memory_store) -> None:
    one_t = head("gamma_pm") + "molality,value\n" + "\n".join(
        f"{m},{np.exp(ln_gamma(np.array(m), 298.15)):.3f}" for m in GRID) + "\n"
    rep = _check(tmp_path, memory_store, one_t, lphi_file())
    [r] = [r for r in rep.summary if r["check"] == "gibbs-helmholtz"]
    assert r["status"] == "not applicable" and "two temperatures" in r["reason"]


def test_thermal_data_are_not_pooled_with_activity(tmp_path, memory_store) -> None:
    rep = _check(tmp_path, memory_store, activity_file(), lphi_file())
    assert not any("L_phi" in r["dataset"] for r in rep.summary if r["check"] != "gibbs-helmholtz")
    assert pytest.approx(sorted({r["temperature_k"] for r in rep.summary if r["check"] == "neighbours"})) == list(TEMPS)
