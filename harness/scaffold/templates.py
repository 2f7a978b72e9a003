"""The text of the generated files. ``{...}`` fields are filled by :func:`render`."""

from __future__ import annotations

MODEL = '''"""{display} — an in-house activity model for saltbench.

Replace the formula below with your own and cite its publication here (equation numbers too).
The template is a Debye-Hückel form with one ion size a and a coefficient lambda for each
cation-anion pair, for solutions of any number of salts (natural-log basis, A = 3 A_phi):

    ln gamma_i = -A z_i^2 sqrt(I) / (1 + B a sqrt(I)) + sum_k lambda_ik m_k,

with the osmotic coefficient that follows from the same excess Gibbs energy,

    phi - 1 = [-(2/3) A I^(3/2) sigma(B a sqrt(I)) + sum_c sum_a lambda_ca m_c m_a] / sum_i m_i,

so the generated test passes as written. Derivatives with respect to the parameters are left to
the harness (finite differences); return them in ``Computed.derivatives`` to make fits faster.
"""

from __future__ import annotations

import numpy as np

from saltbench.models import (
    Computed,
    Parameter,
    ParameterKey,
    SolutionModel,
    Validity,
    hookimpl,
)
from saltbench.models.dh_terms import sigma

__version__ = "0.1.0"


class {cls}(SolutionModel):
    id = "{model_id}"
    name = {display_literal}
    citation = "Your citation here (authors, journal, volume, pages, year)"
    parameters = (
        Parameter("a", "a", "Å", 4.0, lower=1.0, upper=12.0, belongs_to="model",
                  description="ion-size parameter"),
        Parameter("lam", "λ", "kg/mol", 0.05, lower=-1.0, upper=1.0, linear=True,
                  belongs_to="pair", description="cation-anion interaction coefficient"),
    )
    validity = Validity(max_ionic_strength=1.0, note="template: state your own range")
    computes = frozenset({{"ln_gamma", "ln_gamma_pm", "osmotic"}})
    mixtures = True
    single_ion_convention = "the model's own single-ion form (template: state yours)"

    def compute(self, request):
        comp, cond = request.composition, request.conditions
        m, z2 = comp.molality, comp.charges**2  # (N, K) and (K,)
        i = comp.ionic_strength  # (N,)
        s = np.sqrt(i)
        total = m.sum(axis=1)
        a = request.value(ParameterKey("a"))  # (S, 1): one value per parameter set
        x = cond.b_gamma_per_angstrom * a * s  # (S, N)
        dh = -cond.a_gamma * s / (1.0 + x)
        ln_ions = dh[:, :, None] * z2  # (S, N, K)
        phi = 1.0 - 2.0 * i * cond.a_gamma * s * sigma(x) / (3.0 * total)
        for c in (ion for ion in comp.ions if ion.charge > 0):
            for an in (ion for ion in comp.ions if ion.charge < 0):
                lam = request.value(ParameterKey("lam", (c.name, an.name)))
                jc, ja = comp.index(c.name), comp.index(an.name)
                ln_ions[:, :, jc] += lam * m[:, ja]
                ln_ions[:, :, ja] += lam * m[:, jc]
                phi = phi + lam * m[:, jc] * m[:, ja] / total
        values = {{}}
        for q in request.quantities:
            if q.kind == "ln_gamma":
                values[q] = ln_ions[:, :, comp.index(q.of)]
            elif q.kind == "ln_gamma_pm":
                salt = comp.salt(q.of)
                values[q] = (salt.nu_cation * ln_ions[:, :, comp.index(salt.cation.name)]
                             + salt.nu_anion * ln_ions[:, :, comp.index(salt.anion.name)]) / salt.nu
            elif q.kind == "osmotic":
                values[q] = np.broadcast_to(phi, (request.n_sets, comp.n))
        return Computed(values)


@hookimpl
def register_models(context):
    return [{cls}()]
'''

TEST = '''"""Runs the saltbench contract kit on {display}. Run with: python -m pytest {test_file}"""

import importlib.util
import pathlib

from saltbench.models.contract_kit import assert_model_contract

HERE = pathlib.Path(__file__).resolve().parent


def _load():
    {loader}


def test_{module}_meets_the_saltbench_contract():
    module = _load()
    models = module.register_models(context=None)
    assert [m.id for m in models] == ["{model_id}"]
    for model in models:
        assert_model_contract(model)
'''

DROPIN_LOADER = '''spec = importlib.util.spec_from_file_location("{module}", HERE / "{module}.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module'''

PACKAGE_LOADER = '''import sys
    sys.path.insert(0, str(HERE / "src"))
    return importlib.import_module("{module}")'''

PYPROJECT = '''[build-system]
requires = ["setuptools>=70"]
build-backend = "setuptools.build_meta"

[project]
name = "{dist}"
version = "0.1.0"
description = {display_toml}
requires-python = ">=3.11"
dependencies = ["saltbench"]

[project.entry-points."saltbench.plugins"]
{module} = "{module}"

[tool.setuptools]
package-dir = {{"" = "src"}}
py-modules = ["{module}"]
'''


def render(template: str, **fields: str) -> str:
    """Fill a template. The user's model name enters code only as an escaped string literal
    (``display_literal`` for Python, ``display_toml`` for pyproject) and as docstring text with
    quotes, backslashes and line breaks taken out (``display``): a name can never end a string
    early or add a line of code."""
    if "display" in fields:
        raw = fields["display"]
        fields = {**fields, "display": docstring_text(raw), "display_literal": repr(raw),
                  "display_toml": toml_string(f"{raw}: an in-house activity model for saltbench")}
    return template.format(**fields)


def docstring_text(text: str) -> str:
    """Text safe inside a triple-quoted docstring: printable, no quotes, backslashes or breaks."""
    return "".join(c for c in text if c.isprintable() and c not in '"\\\'').strip() or "model"


def toml_string(text: str) -> str:
    """A TOML basic string (JSON's escaping is valid TOML for these characters)."""
    import json

    return json.dumps(text, ensure_ascii=True)
