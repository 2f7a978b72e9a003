"""The registry of fitted properties: curated data feed a fit by name, and a new property is one
registry entry."""

from __future__ import annotations

import numpy as np
import pytest

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import UserError
from saltbench.fitting import properties
from saltbench.fitting.data import FitData
from saltbench.models.quantities import Quantity


def test_water_activity_feeds_the_osmotic_coefficient():
    # NaCl at 1 mol/kg: a_w = 0.96686 and phi = 0.9355 (from memory of Robinson and Stokes,
    # Electrolyte Solutions, 2nd ed., 1959, appendix 8.10); phi = -ln a_w / (nu m M_w)
    d = FitData.from_property("water_activity", [1.0], [0.96686], [1e-5], nu=2)
    assert d.kind[0] == "osmotic"
    assert d.value[0] == pytest.approx(0.9355, abs=2e-4)


def test_each_fitted_property_names_the_contract_quantity_it_is_compared_with():
    nacl = parse_formula("NaCl")
    assert properties.REGISTRY["ln_gamma"].quantity(nacl) == Quantity("ln_gamma_pm", "NaCl")
    assert properties.REGISTRY["osmotic"].quantity(nacl) == Quantity("osmotic")


def test_a_new_property_is_one_registry_entry(monkeypatch):
    monkeypatch.setattr(properties, "REGISTRY", dict(properties.REGISTRY))
    with pytest.raises(UserError, match="cannot fit property 'ln_water_activity'"):
        FitData.from_property("ln_water_activity", [1.0], [-0.0337], [1e-5], nu=2)
    properties.register_property(properties.FittedProperty(
        "ln_aw", "water_activity", "ln a_w", "log of the water activity",
        {"ln_water_activity": lambda m, v, u, nu, ds: (v, u)}))
    d = FitData.from_property("ln_water_activity", [1.0, 2.0], [-0.0337, -0.0690], 1e-5)
    assert list(d.kind) == ["ln_aw", "ln_aw"]
    assert d.select("ln_aw").n == 2


def test_a_curated_property_feeds_one_fitted_property_only(monkeypatch):
    monkeypatch.setattr(properties, "REGISTRY", dict(properties.REGISTRY))
    with pytest.raises(ValueError, match="already feeds"):
        properties.register_property(properties.FittedProperty(
            "other", "osmotic", "x", "x", {"osmotic": lambda m, v, u, nu, ds: (v, u)}))


def test_conversions_keep_first_order_uncertainties():
    # u(ln gamma) = u(gamma) / gamma (GUM, JCGM 100:2008, eq. 10)
    d = FitData.from_property("gamma_pm", [0.1], [0.778], [0.002])
    assert d.uncertainty[0] == pytest.approx(0.002 / 0.778, rel=1e-12)
    assert d.value[0] == pytest.approx(np.log(0.778), rel=1e-12)
