"""Property-based tests (hypothesis) of the electrolyte formula parser and the dataset loader
(issue 7, item 10).

Facts checked: a binary salt of a cation of charge z+ and an anion of charge z- is electroneutral
with nu+ = |z-|/g and nu- = z+/g, g = gcd(z+, |z-|) (common practice, no source); a value
printed as ln(gamma±) or log10(gamma±) is gamma± = e^x or 10^x, its standard uncertainty
u(gamma±) = gamma± u(x) or gamma± ln(10) u(x) by first-order propagation (JCGM 100:2008, GUM,
eq. 10). Generated datasets are invented data of a test scenario of our own.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.chemistry.ions import KNOWN_IONS
from saltbench.curation.datasets import read_dataset
from saltbench.errors import InputFileError

SETTINGS = settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.too_slow])

CATIONS = sorted(f for f, i in KNOWN_IONS.items() if i.charge > 0)
ANIONS = sorted(f for f, i in KNOWN_IONS.items() if i.charge < 0)


def _single_element(formula: str) -> bool:
    # "Na", "Cl": a count can follow directly; "NH4", "SO4", "Fe(CN)6" need parentheses.
    return formula.isalpha() and sum(c.isupper() for c in formula) == 1


def _part(formula: str, count: int) -> str:
    if count == 1:
        return formula
    return f"{formula}{count}" if _single_element(formula) else f"({formula}){count}"


def salt(cation: str, anion: str) -> tuple[str, int, int]:
    zc, za = KNOWN_IONS[cation].charge, -KNOWN_IONS[anion].charge
    g = math.gcd(zc, za)
    nu_c, nu_a = za // g, zc // g
    return _part(cation, nu_c) + _part(anion, nu_a), nu_c, nu_a


@SETTINGS
@given(st.sampled_from(CATIONS), st.sampled_from(ANIONS))
def test_parse_round_trips_ions_charges_and_counts(cation: str, anion: str) -> None:
    formula, nu_c, nu_a = salt(cation, anion)
    e = parse_formula(formula)
    assert (e.cation.formula, e.anion.formula) == (cation, anion), formula
    assert (e.nu_cation, e.nu_anion) == (nu_c, nu_a), formula
    assert (e.cation.charge, e.anion.charge) == (KNOWN_IONS[cation].charge, KNOWN_IONS[anion].charge)
    assert e.nu_cation * e.cation.charge + e.nu_anion * e.anion.charge == 0  # electroneutral
    assert e.name == formula


@SETTINGS
@given(st.sampled_from(CATIONS), st.sampled_from(ANIONS), st.integers(2, 9))
def test_a_salt_that_is_not_electroneutral_is_a_value_error(cation: str, anion: str, k: int) -> None:
    _, nu_c, nu_a = salt(cation, anion)
    wrong = _part(cation, nu_c) + _part(anion, nu_a * k)  # k times too much anion
    with pytest.raises(ValueError, match="not electroneutral"):
        parse_formula(wrong)


FRAGMENTS = st.sampled_from(CATIONS + ANIONS + ["(", ")", "2", "3", "0", " ", "+", "-", "x", "", "\0",
                                                "é", "99999999999999999999"])


@SETTINGS
@given(st.one_of(st.text(max_size=30), st.lists(FRAGMENTS, max_size=6).map("".join)))
def test_junk_never_raises_anything_but_value_error(text: str) -> None:
    try:
        e = parse_formula(text)
    except ValueError:
        return
    # whatever does parse is a real, electroneutral salt
    assert e.nu_cation * e.cation.charge + e.nu_anion * e.anion.charge == 0


# -- the dataset loader -----------------------------------------------------------------------
ELECTROLYTES = ["NaCl", "KCl", "CaCl2", "Na2SO4", "MgSO4", "LaCl3", "(NH4)2SO4", "Mg(NO3)2"]
HEADER = """\
# saltbench dataset 1
# electrolyte: {electrolyte}
# property: {prop}
# basis: {basis}
# temperature: {temperature}
# source: fennwick-2026
# table: generated run (invented)
# precision: {precision}
# uncertainty: {uncertainty}
# typed: measured at the invented Fennwick brine bench (invented values)
molality,value
"""


@st.composite
def datasets(draw):
    prop = draw(st.sampled_from(["gamma_pm", "osmotic", "water_activity"]))
    basis = draw(st.sampled_from(["linear", "ln", "log10"])) if prop == "gamma_pm" else "linear"
    n = draw(st.integers(1, 12))
    m = draw(st.lists(st.floats(1e-4, 30.0, allow_nan=False), min_size=n, max_size=n, unique=True))
    if basis == "linear":
        hi = 1.0 if prop == "water_activity" else 20.0
        v = draw(st.lists(st.floats(1e-3, hi, allow_nan=False), min_size=n, max_size=n))
    else:
        v = draw(st.lists(st.floats(-5.0, 3.0, allow_nan=False), min_size=n, max_size=n))
    celsius = round(draw(st.floats(0.0, 100.0, allow_nan=False)), 3)
    temperature = draw(st.sampled_from([f"{celsius:.3f} C", f"{celsius + 273.15:.3f} K"]))
    u = draw(st.floats(1e-5, 0.1, allow_nan=False))
    text = HEADER.format(electrolyte=draw(st.sampled_from(ELECTROLYTES)), prop=prop, basis=basis,
                         temperature=temperature, precision="0.001", uncertainty=repr(u))
    rows = draw(st.permutations(list(zip(m, v))))
    text += "".join(f"{a!r},{b!r}\n" for a, b in rows)
    return text, prop, basis, rows, u, celsius


@SETTINGS
@given(datasets())
def test_a_valid_dataset_reads_back_the_same_numbers(case) -> None:
    text, prop, basis, rows, u, celsius = case
    d = read_dataset("generated.csv", text=text)
    m = [a for a, _ in rows]
    v = [b for _, b in rows]
    order = np.argsort(m)
    assert d.property == prop and d.basis == basis
    assert d.temperature_k == pytest.approx(celsius + 273.15, abs=1e-9)  # 0 C = 273.15 K (SI Brochure, 9th ed., 2.3.1)
    np.testing.assert_array_equal(d.molality, np.asarray(m)[order])  # repr round-trips floats exactly
    np.testing.assert_array_equal(d.value_printed, np.asarray(v)[order])
    x = np.asarray(v)[order]
    gamma = {"linear": x, "ln": np.exp(x), "log10": 10.0 ** x}[basis]
    du = {"linear": 1.0, "ln": gamma, "log10": gamma * np.log(10.0)}[basis]
    np.testing.assert_allclose(d.value, gamma, rtol=1e-13)
    np.testing.assert_allclose(d.u_value, u * np.asarray(du), rtol=1e-13)
    assert d.lines == [12 + int(i) for i in order]  # rows start on line 12 of HEADER + rows


GOOD = HEADER.format(electrolyte="KCl", prop="osmotic", basis="linear", temperature="25 C",
                     precision="0.001", uncertainty="0.003") + "0.1,0.927\n0.5,0.899\n1.0,0.897\n"


@st.composite
def corruptions(draw):
    text = GOOD
    for _ in range(draw(st.integers(1, 3))):
        kind = draw(st.sampled_from(["delete", "insert", "replace-line", "drop-line", "swap", "truncate"]))
        lines = text.splitlines(keepends=True)
        if kind == "delete" and text:
            i = draw(st.integers(0, len(text) - 1))
            text = text[:i] + text[i + 1:]
        elif kind == "insert":
            i = draw(st.integers(0, len(text)))
            text = text[:i] + draw(st.text(min_size=1, max_size=3)) + text[i:]
        elif kind == "replace-line" and lines:
            i = draw(st.integers(0, len(lines) - 1))
            lines[i] = draw(st.text(max_size=20)) + "\n"
            text = "".join(lines)
        elif kind == "drop-line" and lines:
            del lines[draw(st.integers(0, len(lines) - 1))]
            text = "".join(lines)
        elif kind == "swap" and len(lines) > 1:
            i, j = draw(st.integers(0, len(lines) - 1)), draw(st.integers(0, len(lines) - 1))
            lines[i], lines[j] = lines[j], lines[i]
            text = "".join(lines)
        elif kind == "truncate":
            text = text[:draw(st.integers(0, len(text)))]
    return text


@settings(max_examples=150, deadline=None)
@given(corruptions())
def test_a_corrupted_dataset_raises_input_file_error_only(text: str) -> None:
    try:
        d = read_dataset("corrupted.csv", text=text)
    except InputFileError as exc:
        assert exc.path == "corrupted.csv"
        assert exc.line is None or 1 <= exc.line <= max(1, len(text.splitlines()) + 1)
        assert "\n" not in str(exc)  # one line, as the CLI prints it
        return
    # a corruption that still reads (a changed digit, say) gives a well-formed dataset
    assert np.all(np.isfinite(d.molality)) and np.all(d.molality > 0)
    assert np.all(np.isfinite(d.value)) and np.all(d.value > 0)
    assert np.all(np.diff(d.molality) > 0)
