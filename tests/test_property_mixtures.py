"""Property-based tests (hypothesis) of the mixture dataset reader.

Facts checked: each salt dissolves into nu+ cations and nu- anions per formula unit, so every
resolved composition is electroneutral, sum_i z_i m_i = 0 (common practice, no source); the
ionic strength I = 1/2 sum_i m_i z_i^2 (IUPAC Green Book, 3rd ed., 2007, section 2.13) of a
mixture of salts is sum_s m_s (nu+ z+^2 + nu- z-^2) / 2. Generated files are invented data of a
test scenario of our own.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from test_property_parsers import ANIONS, CATIONS, salt

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.curation.mixtures import read_mixture
from saltbench.errors import InputFileError

SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                            HealthCheck.function_scoped_fixture])

HEADER = """# saltbench mixture 1
# system: {system}
# property: osmotic
# temperature: 25 C
# source: harbour-lab-2026
# table: generated (invented)
# uncertainty: 0.003
# typed: invented for the saltbench property tests
"""

_salts = st.lists(st.tuples(st.sampled_from(CATIONS), st.sampled_from(ANIONS)).map(lambda ca: salt(*ca)[0]),
                  min_size=2, max_size=3, unique=True)
_amount = st.sampled_from([0.0, 0.001, 0.01, 0.05, 0.1, 0.25, 0.5, 1.0, 2.0, 3.5])


@st.composite
def mixtures(draw):
    salts = draw(_salts)
    rows = draw(st.lists(st.tuples(*[_amount] * len(salts)).filter(any), min_size=1, max_size=8, unique=True))
    return salts, rows


def _text(salts: list[str], rows: list[tuple[float, ...]]) -> str:
    lines = [",".join(f"m({s})" for s in salts) + ",value"]
    lines += [",".join(f"{x:g}" for x in r) + ",0.95" for r in rows]
    return HEADER.format(system=" + ".join(salts)) + "\n".join(lines) + "\n"


@SETTINGS
@given(mixtures())
def test_compositions_are_neutral_and_ionic_strength_is_the_sum_over_salts(tmp_path: Path, mix) -> None:
    salts, rows = mix
    path = tmp_path / "gen.csv"
    path.write_text(_text(salts, rows), encoding="utf-8")
    mp = read_mixture(path).points()
    comp = mp.composition
    assert np.allclose(comp.molality @ comp.charges, 0.0, atol=1e-12)
    by_salt = np.zeros(len(rows))
    for k, name in enumerate(salts):
        e = parse_formula(name)
        half_sum = (e.nu_cation * e.cation.charge**2 + e.nu_anion * e.anion.charge**2) / 2
        by_salt += np.array([r[k] for r in rows]) * half_sum
    np.testing.assert_allclose(mp.ionic_strength, by_salt, rtol=1e-12)
    assert mp.lines == tuple(range(10, 10 + len(rows)))


@SETTINGS
@given(mixtures(), st.data())
def test_a_garbled_cell_is_refused_in_one_line_or_read(tmp_path: Path, mix, data) -> None:
    salts, rows = mix
    lines = _text(salts, rows).splitlines()
    n = data.draw(st.integers(9, len(lines) - 1))
    cells = lines[n].split(",")
    j = data.draw(st.integers(0, len(cells) - 1))
    cells[j] = data.draw(st.text(alphabet="0123456789.-+eE()xX ,#", max_size=6))
    lines[n] = ",".join(cells)
    path = tmp_path / "garbled.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    try:
        read_mixture(path)
    except InputFileError as exc:
        assert "\n" not in str(exc) and str(exc).startswith(f"{path}:")
