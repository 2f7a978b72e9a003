"""The invented mixture examples (refdata/examples/mixtures): labelled invented, reproducible
from their script, loadable, and following the rules their notes state.

These are demo data of our own scenario (the invented Kestrel Bay pilot plant); the checks
below hold them to what the files say about themselves, and their one-salt ends to published
tables bundled with saltbench.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest
from conftest import REFDATA

from saltbench.curation.datasets import read_dataset
from saltbench.curation.mixtures import read_mixture
from saltbench.store import ingest
from saltbench.store.mixtures import mixture_points

FOLDER = REFDATA / "examples" / "mixtures"
SCRIPT = REFDATA / "tools" / "make_mixture_examples.py"


def _script():
    spec = importlib.util.spec_from_file_location("make_mixture_examples", SCRIPT)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_the_script_writes_exactly_the_files_in_the_folder() -> None:
    generated = _script().generate()
    on_disk = {p.name for p in FOLDER.iterdir() if p.suffix in (".csv", ".txt")}
    assert set(generated) == on_disk
    for name, text in generated.items():
        assert (FOLDER / name).read_text(encoding="utf-8") == text, name


def test_every_file_says_it_is_invented() -> None:
    for path in FOLDER.glob("*.csv"):
        md = read_mixture(path)
        assert md.invented and md.typed.startswith("invented")
        assert md.note.startswith("INVENTED") and "make_mixture_examples.py" in md.note
    assert "INVENTED" in (FOLDER / "mixtures.sources.txt").read_text(encoding="utf-8")
    assert "INVENTED" in (FOLDER / "README.md").read_text(encoding="utf-8")


def test_the_folder_loads_as_a_whole(memory_store) -> None:
    files = sorted(FOLDER.glob("*.txt")) + sorted(FOLDER.glob("*.csv"))
    report = ingest(memory_store, files)
    assert sum(a.startswith("mixture dataset") for a in report.added) == 2
    [hcl] = mixture_points(memory_store, "HCl + NaCl")
    assert hcl.n == 30 and tuple(hcl.quantity) == ("ln_gamma_pm", "HCl")
    assert sorted(set(np.round(hcl.ionic_strength, 9))) == [1.0, 2.0, 3.0]


def test_harned_rule_with_the_stated_coefficient_is_recovered() -> None:
    """Harned's rule (Harned, J. Am. Chem. Soc. 57, 1865 (1935)): at constant I, log10 gamma±(HCl)
    is linear in the ionic-strength fraction of NaCl with slope -alpha I. A least-squares line
    per ionic strength (numpy) recovers the alpha the note states within 3 standard errors."""
    md = read_mixture(FOLDER / "hcl-nacl.gamma-hcl.kestrel-notebook-12.csv")
    stated = _script().ALPHA_HCL_NACL
    assert f"{stated} kg/mol" in md.note
    m = md.composition()
    for ionic_strength in (1.0, 2.0, 3.0):
        rows = np.isclose(m.ionic_strength, ionic_strength)
        y = m.of("Na+")[rows] / ionic_strength
        log10_gamma = np.log10(md.value_printed[rows])
        coef, cov = np.polyfit(y, log10_gamma, 1, cov=True)
        alpha, se = -coef[0] / ionic_strength, np.sqrt(cov[0, 0]) / ionic_strength
        assert abs(alpha - stated) < 3 * se + 1e-4, (ionic_strength, alpha, se)


def test_the_pure_hcl_ends_agree_with_the_handbook() -> None:
    """At y_NaCl = 0 the series is HCl alone: gamma± at 1 and 2 mol/kg against the transcribed
    handbook tables bundled (CRC Handbook, Robinson-Stokes evaluation: 0.809, 1.009), within the
    stated noise (3 x 0.0015) plus the Pitzer-Mayorga fit's own deviation (0.003) plus half a
    printed digit."""
    md = read_mixture(FOLDER / "hcl-nacl.gamma-hcl.kestrel-notebook-12.csv")
    pure = md.composition().of("Na+") == 0
    ours = dict(zip(md.composition().of("H+")[pure], md.value_printed[pure]))
    handbook = {}
    for path in (REFDATA / "datasets").glob("HCl.gamma_pm.*.csv"):
        d = read_dataset(path)
        if d.typed.startswith("transcribed"):
            handbook.update({float(x): float(v) for x, v in zip(d.molality, d.value_printed) if x in (1.0, 2.0)})
    assert set(handbook) == {1.0, 2.0}
    for molality, value in handbook.items():
        assert ours[molality] == pytest.approx(value, abs=3 * 0.0015 + 0.003 + 0.0005)


def test_the_pure_nacl_ends_of_the_osmotic_series_agree_with_the_bundled_table() -> None:
    """At y_MgCl2 = 0 the series is NaCl alone: phi at the molalities (of 1, 2 and 3 mol/kg) that the bundled
    NaCl osmotic table (from memory of Robinson and Stokes (1959), appendix) gives, within 3 x the
    stated noise 0.002 plus the Pitzer-Mayorga fit's deviation (0.003)."""
    md = read_mixture(FOLDER / "nacl-mgcl2.osmotic.kestrel-notebook-12.csv")
    comp = md.composition()
    pure = comp.of("Mg+2") == 0
    ours = dict(zip(comp.of("Na+")[pure], md.value_printed[pure]))
    table = read_dataset(REFDATA / "datasets" / "NaCl.osmotic.robinson-stokes-1959.csv")
    ref = dict(zip(table.molality.tolist(), table.value_printed.tolist()))
    common = set(ours) & set(ref)  # the table as bundled keeps 3 mol/kg of the three
    assert common
    for molality in common:
        assert ours[molality] == pytest.approx(ref[molality], abs=3 * 0.002 + 0.003)


def test_osmotic_series_follows_its_stated_rule() -> None:
    """The file's values minus the stated rule are noise of the stated size: mean near zero,
    standard deviation within a factor of two of 0.002 (15 draws)."""
    script = _script()
    md = read_mixture(FOLDER / "nacl-mgcl2.osmotic.kestrel-notebook-12.csv")
    a_phi, sets = script.pitzer_set()
    comp = md.composition()
    m_na, m_mg = comp.of("Na+"), comp.of("Mg+2")
    residuals = []
    for i, phi in enumerate(md.value_printed):
        ist = comp.ionic_strength[i]
        _, phi_na = script.pitzer_one_salt(np.array([ist]), sets["NaCl"], 1, 1, 1, 1, a_phi)
        _, phi_mg = script.pitzer_one_salt(np.array([ist / 3]), sets["MgCl2"], 1, 2, 2, 1, a_phi)
        ions = 2 * m_na[i] + 3 * m_mg[i]
        y = 3 * m_mg[i] / ist
        rule = (2 * m_na[i] * phi_na[0] + 3 * m_mg[i] * phi_mg[0]) / ions + script.B_NACL_MGCL2 * y * (1 - y) * ist
        residuals.append(phi - rule)
    r = np.array(residuals)
    assert abs(r.mean()) < 3 * script.NOISE_PHI / np.sqrt(len(r))
    assert 0.5 * script.NOISE_PHI < r.std(ddof=1) < 2 * script.NOISE_PHI


def test_examples_are_not_in_the_bundle() -> None:
    from saltbench.store.bundled import bundled_files

    assert not [p for p in bundled_files() if "examples" in Path(p).parts]
