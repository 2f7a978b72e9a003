"""Mixture dataset files (DEVELOPERS.md, "Mixture datasets"): what a file says reaches the store
and comes back as MixturePoints unchanged, compositions resolved into ion molalities, ionic
strengths as the IUPAC definition gives them.

Every file here is set at the invented Harbour Works laboratory (a test scenario; the values
are made up). The malformed files are in tests/corpus/bad (prefix m).
"""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

import numpy as np
import pytest
from conftest import write

from saltbench.curation.mixtures import read_mixture, same_system
from saltbench.errors import InputFileError
from saltbench.store import ingest
from saltbench.store.mixtures import mixture_dataset_rows, mixture_points

BIB = """[harbour-lab-2026]
authors: Harbour Works Laboratory
title: Invented mixed-salt runs (test scenario, invented values)
publisher: saltbench test scenario
year: 2026
"""

# HCl in HCl + NaCl as salt amounts, gamma± printed linearly, one point with its own uncertainty
HCL_NACL = """# saltbench mixture 1
# system: HCl + NaCl
# property: gamma_pm(HCl)
# temperature: 25 C
# source: harbour-lab-2026
# table: run sheet 12 (invented)
# uncertainty: 0.002
# typed: measured by the invented Harbour Works laboratory (test scenario, invented values)
m(HCl),m(NaCl),value,uncertainty
1.0,0,0.809,
0.5,0.5,0.781,0.004
0.05,0.95,0.7600,
"""

# the same family given as ions, and a 2-1 salt with it: NaCl + MgCl2, osmotic coefficients
NACL_MGCL2_IONS = """# saltbench mixture 1
# system: NaCl + MgCl2
# property: osmotic
# temperature: 298.15 K
# source: harbour-lab-2026
# table: run sheet 13 (invented)
# uncertainty: 0.003
# typed: invented for the saltbench tests
# note: amounts as ions
m(Na+),m(Mg+2),m(Cl-),value
0.7,0.1,0.9,0.928
0.4,0.2,0.8,0.919
"""


def _table(text: str) -> list[dict[str, str]]:
    """The CSV table of a file read with the csv module alone (independently of saltbench)."""
    lines = [ln for ln in text.splitlines() if not ln.startswith("#")]
    return list(csv.DictReader(io.StringIO("\n".join(lines))))


def test_a_file_read_stored_and_returned_is_what_the_file_said(memory_store, tmp_path: Path) -> None:
    bib = write(tmp_path / "harbour.sources.txt", BIB)
    path = write(tmp_path / "hcl-nacl.csv", HCL_NACL)
    ingest(memory_store, [bib, path])
    [mp] = mixture_points(memory_store, "hcl-nacl")
    rows = _table(HCL_NACL)

    # ions of the system in the order of its salts, cation first: H+, Cl-, Na+
    assert mp.composition.names == ("H+", "Cl-", "Na+")
    assert [s.name for s in mp.composition.salts] == ["HCl", "NaCl"]
    for i, r in enumerate(rows):
        m_hcl, m_nacl = float(r["m(HCl)"]), float(r["m(NaCl)"])
        # each salt dissolves into its ions (HCl -> H+ + Cl-, NaCl -> Na+ + Cl-)
        assert mp.composition.of("H+")[i] == m_hcl
        assert mp.composition.of("Na+")[i] == m_nacl
        assert mp.composition.of("Cl-")[i] == pytest.approx(m_hcl + m_nacl, rel=1e-15)
        # gamma± stored as ln gamma±, its uncertainty by d ln(gamma) = d gamma / gamma
        gamma = float(r["value"])
        u = float(r["uncertainty"] or 0.002)
        assert mp.values[i] == pytest.approx(math.log(gamma), rel=1e-15)
        assert mp.uncertainties[i] == pytest.approx(u / gamma, rel=1e-15)
    assert tuple(mp.quantity) == ("ln_gamma_pm", "HCl")
    assert mp.temperature_k == 298.15 and np.all(mp.composition.temperature_k == 298.15)
    assert mp.lines == (10, 11, 12)
    assert mp.source == "harbour-lab-2026" and mp.origin == "user"
    # the store's copy equals the reader's, content hash included
    assert mp.same_points(read_mixture(path).points())
    assert mp.content_hash == read_mixture(path).content_hash()


def test_ionic_strength_of_each_point_is_half_sum_m_z_squared(memory_store, tmp_path: Path) -> None:
    """I = 1/2 sum m_i z_i^2 (IUPAC Green Book, 3rd ed., 2007, section 2.13), by hand."""
    ingest(memory_store, [write(tmp_path / "h.sources.txt", BIB), write(tmp_path / "mix.csv", NACL_MGCL2_IONS)])
    [mp] = mixture_points(memory_store, "mix")
    # point 1: Na+ 0.7, Mg+2 0.1, Cl- 0.9 -> 1/2 (0.7*1 + 0.1*4 + 0.9*1) = 1.0
    # point 2: Na+ 0.4, Mg+2 0.2, Cl- 0.8 -> 1/2 (0.4*1 + 0.2*4 + 0.8*1) = 1.0
    assert mp.ionic_strength == pytest.approx([1.0, 1.0], rel=1e-15)
    assert tuple(mp.quantity) == ("osmotic", "")
    assert mp.values.tolist() == [0.928, 0.919]  # osmotic coefficients as printed
    assert mp.uncertainties.tolist() == [0.003, 0.003]
    assert mp.invented


def test_salt_amounts_and_ion_amounts_give_the_same_composition(tmp_path: Path) -> None:
    as_salts = NACL_MGCL2_IONS.replace("m(Na+),m(Mg+2),m(Cl-),value\n0.7,0.1,0.9,0.928\n0.4,0.2,0.8,0.919",
                                       "m(NaCl),m(MgCl2),value\n0.7,0.1,0.928\n0.4,0.2,0.919")
    a = read_mixture(write(tmp_path / "a.csv", as_salts)).points()
    b = read_mixture(write(tmp_path / "b.csv", NACL_MGCL2_IONS)).points()
    assert a.composition.names == b.composition.names == ("Na+", "Cl-", "Mg+2")
    np.testing.assert_allclose(a.composition.molality, b.composition.molality, rtol=1e-15)
    # 2:1 salt: MgCl2 at 0.1 mol/kg gives 0.1 Mg+2 and 0.2 Cl- (stoichiometry, common practice, no source)
    assert a.composition.of("Cl-").tolist() == pytest.approx([0.9, 0.8])


def test_ln_gamma_file_is_stored_as_printed(tmp_path: Path) -> None:
    text = HCL_NACL.replace("gamma_pm(HCl)", "ln_gamma_pm(HCl)").replace(
        "1.0,0,0.809,\n0.5,0.5,0.781,0.004\n0.05,0.95,0.7600,", "1.0,0,-0.2120,\n0.5,0.5,-0.2472,0.005")
    mp = read_mixture(write(tmp_path / "ln.csv", text)).points()
    assert mp.values.tolist() == [-0.2120, -0.2472]
    assert mp.uncertainties.tolist() == [0.002, 0.005]


def test_a_zero_amount_is_a_point_of_one_salt(tmp_path: Path) -> None:
    """Trace and pure-salt ends of a series are kept: an amount may be zero, not negative."""
    mp = read_mixture(write(tmp_path / "z.csv", HCL_NACL)).points()
    assert mp.composition.of("Na+")[0] == 0.0 and mp.ionic_strength[0] == 1.0


@pytest.mark.parametrize(("change", "field", "fragment"), [
    (("# property: gamma_pm(HCl)", "# property: gamma_pm(NaBr)"), "property", "salt NaBr is not in the system"),
    (("# system: HCl + NaCl", "# system: HCl + NaCl + HCl"), "system", "salt HCl is named twice"),
    (("# system: HCl + NaCl", "# system: HCl +"), "system", "expected salts joined by '+'"),
    (("0.05,0.95,0.7600,", "0.05,0.95,0,"), "value", "gamma_pm must be positive"),
    (("0.05,0.95,0.7600,", "0.05,0.95,1e25,"), "value", "outside 1e-20 to 1e20"),
    (("0.05,0.95,0.7600,", "0.05,0.95,0.7600,-1"), "uncertainty", "must be positive"),
    (("0.05,0.95,0.7600,", "0.05,0.95,inf,"), "value", "not a finite number"),
    (("# temperature: 25 C", "# temperature: 400 C"), "temperature", "is outside"),
])
def test_bad_values_name_file_line_and_field(tmp_path: Path, change, field, fragment) -> None:
    path = write(tmp_path / "bad.csv", HCL_NACL.replace(*change))
    with pytest.raises(InputFileError) as exc:
        read_mixture(path)
    assert exc.value.field == field and exc.value.line is not None
    assert str(exc.value).startswith(f"{path}:{exc.value.line}: field '{field}': ")
    assert fragment in str(exc.value)


def test_system_names_match_whatever_the_order(memory_store, tmp_path: Path) -> None:
    assert same_system("HCl + NaCl", "NaCl+HCl")
    assert not same_system("HCl + NaCl", "HCl + KCl")
    ingest(memory_store, [write(tmp_path / "h.sources.txt", BIB), write(tmp_path / "hcl-nacl.csv", HCL_NACL)])
    assert [r.key for r in mixture_dataset_rows(memory_store, "NaCl + HCl")] == ["hcl-nacl"]
    assert [p.key for p in mixture_points(memory_store, "NaCl + HCl")] == ["hcl-nacl"]
    assert mixture_dataset_rows(memory_store, "HCl + KCl") == []


def test_points_from_the_api_feed_a_model_as_they_are(tmp_path: Path) -> None:
    """What fitting on mixtures will do: ask a model for ``points.quantity`` at
    ``points.composition``. Davies's equation (C. W. Davies, J. Chem. Soc. 1938, 2093; 0.3 as
    revised in 1962) gives ln gamma± = -A_gamma |z+ z-| (sqrt(I)/(1 + sqrt(I)) - 0.3 I), a function
    of the ionic strength alone, so each mixture point must get the value of the formula at that
    point's I, written out here by hand."""
    from saltbench.api import Session
    from saltbench.api import mixture_points as api_points
    from saltbench.models.contract import Conditions, Request
    from saltbench.models.discovery import build_registry
    from saltbench.models.evaluate import compute
    from saltbench.models.quantities import Quantity
    from saltbench.store import open_store

    session = Session(open_store(memory=True), seed=False)
    session.add([write(tmp_path / "h.sources.txt", BIB), write(tmp_path / "mix.csv", NACL_MGCL2_IONS),
                 write(tmp_path / "hcl.csv", HCL_NACL)])
    [mp] = api_points(session, "HCl + NaCl")
    assert isinstance(mp.quantity, Quantity) and mp.quantity == Quantity("ln_gamma_pm", "HCl")
    model = build_registry(use_environment=False).models["davies"].model
    params = {k: np.array([[0.3]]) for k in model.keys_for(mp.composition)}
    conditions = Conditions.of(mp.composition)
    out = compute(model, Request(mp.composition, (mp.quantity,), params, conditions))
    s = np.sqrt(mp.ionic_strength)
    by_hand = -conditions.a_gamma * (s / (1 + s) - 0.3 * mp.ionic_strength)
    np.testing.assert_allclose(out.values[mp.quantity][0], by_hand, rtol=1e-12)
    assert out.values[mp.quantity].shape == (1, mp.n) == (1, len(mp.values))
