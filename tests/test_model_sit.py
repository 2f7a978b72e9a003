"""SIT: contract, the published single-ion form, and handbook CaCl2 values."""

from pathlib import Path

import numpy as np
import pytest
from _handbook import CACL2_GAMMA, CACL2_M

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.curation.parameters import read_parameter_file
from saltbench.models.contract_kit import assert_model_contract
from saltbench.models.evaluate import evaluate, make_context
from saltbench.plugins.sit import SIT
from saltbench.refdata import __file__ as _refdata

PARAMS = Path(_refdata).parent / "parameters"


@pytest.mark.parametrize("eps", [-0.12, 0.0, 0.03, 0.19])
def test_contract(eps):
    assert_model_contract(SIT(), params={"eps": eps})


def test_single_ion_form():
    # Grenthe et al. (1992), appendix B: log10 gamma_i = -z_i^2 D + sum_j eps(i,j) m_j,
    # D = A sqrt(I)/(1 + 1.5 sqrt(I)); in Na2SO4 the Na+ ion sees m(SO4-2) = m.
    e = parse_formula("Na2SO4")
    ctx = make_context(e)
    m = np.array([0.2, 1.0])
    s = np.sqrt(e.ionic_strength(m))
    d = ctx.dh.a_gamma_log10 * s / (1 + 1.5 * s)
    r = evaluate(SIT(), e, m, {"eps": -0.12}, ions=True)
    np.testing.assert_allclose(r.ln_gamma_ions["cation"] / np.log(10), -d - 0.12 * m, rtol=1e-12)
    np.testing.assert_allclose(r.ln_gamma_ions["anion"] / np.log(10), -4 * d - 0.12 * 2 * m,
                               rtol=1e-12)


def test_nea_values_in_bundled_set():
    # eps(Na+,Cl-) = 0.03, eps(K+,Cl-) = 0.00, eps(H+,Cl-) = 0.12 kg/mol (from memory of Grenthe
    # et al. 1992 / Guillaumont et al. 2003).
    pf = read_parameter_file(PARAMS / "sit-grenthe-1992.csv")
    eps = {r.target: r.values["eps"] for r in pf.rows}
    assert (eps["NaCl"], eps["KCl"], eps["HCl"]) == (0.03, 0.00, 0.12)
    assert pf.from_memory


def test_handbook_cacl2():
    # CRC CaCl2 column (see _handbook.py) to m = 1 (I = 3, inside SIT's range) with
    # eps(Ca+2,Cl-) = 0.14 kg/mol (from memory of Grenthe et al. 1992): within 0.01.
    sel = CACL2_M <= 1.0
    r = evaluate(SIT(), parse_formula("CaCl2"), CACL2_M[sel], {"eps": 0.14})
    np.testing.assert_allclose(r.gamma_pm, CACL2_GAMMA[sel], atol=0.01)
