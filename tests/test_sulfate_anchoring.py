"""2-2 sulfates: the transcribed Robinson-Stokes values and the Pitzer-Mayorga (1974) set differ in
their dilute anchoring, and the comparison says so.

Sources: gamma± from the CRC Handbook table "Activity Coefficients of Acids, Bases, and Salts"
(the Robinson-Stokes evaluation, bundled as crc-acids-bases-salts), which prints every 2-2
sulfate as 0.150 at 0.1 mol/kg; the Pitzer and Mayorga (1974) parameters and the Robinson-Stokes
MgSO4 osmotic coefficients are bundled from memory of those papers (see each file).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from saltbench.api import Session, resolve_parameters
from saltbench.fitting.flags import FlagKind
from saltbench.models.evaluate import make_context
from saltbench.water.debye_huckel import debye_huckel_constants, with_a_phi


@pytest.fixture(scope="module")
def session(seeded_store_file: Path, tmp_path_factory: pytest.TempPathFactory) -> Session:
    import shutil

    path = tmp_path_factory.mktemp("anchoring") / "store.sqlite"
    shutil.copy(seeded_store_file, path)
    return Session(path)


def _set_against_data(session: Session, salt: str, prop: str) -> tuple[np.ndarray, np.ndarray]:
    model = session.registry.models["pitzer"].model
    e = session.electrolyte(salt)
    pub = resolve_parameters(session, model, e, "pitzer-mayorga-1974")
    ctx = make_context(e, dh=with_a_phi(debye_huckel_constants(298.15), pub.a_phi, pub.set_id))
    values = {**model.defaults(e), **pub.values}
    pts = session.points(salt)
    pts = pts[(pts.property == prop) & (pts.source != "crc-handbook")].sort_values("molality")
    m = pts.molality.to_numpy(float)
    if prop == "gamma_pm":
        return m, np.log(pts.value.to_numpy(float)) - model.ln_gamma_pm(m, values, ctx)
    return m, pts.value.to_numpy(float) - model.osmotic(m, values, ctx)


def test_all_two_two_sulfates_share_one_value_at_a_tenth_molal(session: Session) -> None:
    for salt in ("BeSO4", "CdSO4", "CuSO4", "MgSO4", "MnSO4", "NiSO4", "UO2SO4", "ZnSO4"):
        pts = session.points(salt)
        assert float(pts[(pts.molality == 0.1)].value.iloc[0]) == 0.150, salt


@pytest.mark.parametrize("salt, low, high", [("MgSO4", -0.13, -0.09), ("ZnSO4", -0.09, -0.055)])
def test_set_and_tables_differ_by_a_constant_factor(session: Session, salt: str, low: float, high: float) -> None:
    m, r = _set_against_data(session, salt, "gamma_pm")
    assert m.min() == pytest.approx(0.1) and m.max() == pytest.approx(1.0)
    assert low < r.mean() < high           # 8-12 % in gamma±, far beyond the tables' digits
    assert r.std() < 0.2 * abs(r.mean())   # ... and nearly constant: a shift, not a shape


def test_osmotic_coefficients_agree_where_gamma_does_not(session: Session) -> None:
    m, r = _set_against_data(session, "MgSO4", "osmotic")
    assert len(m) >= 5 and np.max(np.abs(r)) < 0.011


def test_copper_sulfate_is_anchored_alike(session: Session) -> None:
    _, r = _set_against_data(session, "CuSO4", "gamma_pm")
    assert abs(r.mean()) < 0.02


def test_compare_names_the_anchoring_difference(session: Session) -> None:
    from saltbench.api import compare
    from saltbench.comparison.settings import CompareSettings

    comp = compare(session, ["MgSO4", "CuSO4", "NaCl"], CompareSettings(models=("pitzer",)), jobs=1)
    flags = {name: [f.text for o in outs for f in o.flags if f.kind is FlagKind.PUBLISHED_ANCHORING]
             for name, outs in comp.outcomes.items()}
    assert len(flags["MgSO4"]) == 1
    assert "pitzer-mayorga-1974" in flags["MgSO4"][0] and "-0.11" in flags["MgSO4"][0]
    assert flags["CuSO4"] == [] and flags["NaCl"] == []
