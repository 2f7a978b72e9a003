"""The text of the generated files. ``{...}`` fields are filled by :func:`render`."""

from __future__ import annotations

MODEL = '''"""{display} — an in-house activity model for saltbench.

Replace the formula below with your own and cite its publication here (equation numbers too).
The template is the Hückel form with one ion size and a linear term,
    ln gamma± = -A |z+ z-| sqrt(I) / (1 + B a sqrt(I)) + b I,
with its Gibbs-Duhem-consistent osmotic coefficient, so the generated test passes as written.
"""

from __future__ import annotations

import numpy as np

from saltbench.models import ActivityModel, Parameter, Validity, hookimpl

__version__ = "0.1.0"


def _sigma(x):
    # sigma(x) = 3/x^3 [1 + x - 1/(1 + x) - 2 ln(1 + x)] = 3 sum (-1)^n (n+1)/(n+3) x^n;
    # the series is used below x = 1e-3, where the closed form loses digits
    x = np.asarray(x, dtype=float)
    small = x < 1e-3
    xs = np.where(small, 1.0, x)
    exact = 3.0 / xs**3 * (1.0 + xs - 1.0 / (1.0 + xs) - 2.0 * np.log1p(xs))
    series = 1.0 - 1.5 * x + 1.8 * x**2 - 2.0 * x**3
    return np.where(small, series, exact)


class {cls}(ActivityModel):
    id = "{model_id}"
    name = {display_literal}
    citation = "Your citation here (authors, journal, volume, pages, year)"
    parameters = (
        Parameter("a", "a", "Å", 4.0, lower=1.0, upper=12.0, description="ion-size parameter"),
        Parameter("b", "b", "kg/mol", 0.05, lower=-1.0, upper=1.0, linear=True,
                  description="linear coefficient"),
    )
    validity = Validity(max_ionic_strength=1.0, note="template: state your own range")

    def ln_gamma_pm(self, m, params, ctx):
        e = ctx.electrolyte
        s = np.sqrt(e.ionic_strength(m))
        x = ctx.dh.b_gamma_per_angstrom * params["a"] * s
        return -e.zz * ctx.dh.a_gamma * s / (1.0 + x) + params["b"] * e.ionic_strength(m)

    def osmotic(self, m, params, ctx):
        e = ctx.electrolyte
        s = np.sqrt(e.ionic_strength(m))
        x = ctx.dh.b_gamma_per_angstrom * params["a"] * s
        return 1.0 - e.zz * ctx.dh.a_gamma * s * _sigma(x) / 3.0 + params["b"] * e.ionic_strength(m) / 2.0


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
