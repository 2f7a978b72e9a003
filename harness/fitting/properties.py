"""The properties a fit uses, by name: how curated data become fit data, and what they are
compared with.

Each :class:`FittedProperty` is one basis a fit compares on (``ln_gamma``: ln gamma± of the
salt; ``osmotic``: phi), the quantity of the model contract it is compared with, the curated
property names that feed it and how each is converted. Fitting, cross-validation, validity
scans, comparison and report take their list of properties from :data:`REGISTRY`; adding a
property (a heat of dilution, say) is one :func:`register_property` and its data format.

Conversions keep first-order standard uncertainties (GUM, JCGM 100:2008, eq. 10): for
y = ln x, u(y) = u(x) / x; water activities become phi = -ln(a_w) / (nu m M_w) with
u(phi) = u(a_w) / (a_w nu m M_w) by the same rule (IUPAC Green Book, 3rd ed., 2007, 2.13 for
the relation of phi and a_w).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import UserError
from saltbench.models.quantities import Quantity, kind_of
from saltbench.water.properties import MOLAR_MASS_WATER

#: (molality, value, uncertainty, nu, dataset) -> (value, uncertainty) on the fitted basis
Converter = Callable[[np.ndarray, np.ndarray, np.ndarray, "int | None", str],
                     tuple[np.ndarray, np.ndarray]]


@dataclass(frozen=True)
class FittedProperty:
    """One basis a fit compares on."""

    name: str  # e.g. "ln_gamma"
    quantity_kind: str  # the model-contract kind it is compared with, e.g. "ln_gamma_pm"
    symbol: str  # as printed in tables, e.g. "ln γ±"
    description: str
    curated: Mapping[str, Converter]  # curated property name -> conversion
    words: str = ""  # in plain-text messages, e.g. "ln gamma±" (default: the name)
    #: listed in every fit's residual summary even without points (the activity properties);
    #: False: listed only where a fit has points of it (the thermal ones, fitted across
    #: temperatures only, so that fits at one temperature report as before)
    always_listed: bool = True

    @property
    def text(self) -> str:
        return self.words or self.name

    def quantity(self, electrolyte: Electrolyte) -> Quantity:
        """The quantity of ``electrolyte``'s solution this property is compared with."""
        subject = kind_of(self.quantity_kind).subject
        return Quantity(self.quantity_kind, electrolyte.name if subject == "salt" else "")


REGISTRY: dict[str, FittedProperty] = {}


def register_property(prop: FittedProperty) -> FittedProperty:
    clash = [c for p in REGISTRY.values() if p.name != prop.name for c in p.curated
             if c in prop.curated]
    if clash:
        raise ValueError(f"curated property {clash[0]!r} already feeds another fitted property")
    kind_of(prop.quantity_kind)  # must be a known quantity kind
    REGISTRY[prop.name] = prop
    return prop


def for_curated(curated: str) -> tuple[FittedProperty, Converter]:
    """The fitted property a curated property feeds, and its conversion."""
    for prop in REGISTRY.values():
        if curated in prop.curated:
            return prop, prop.curated[curated]
    known = sorted(c for p in REGISTRY.values() for c in p.curated)
    raise UserError(f"fit data: cannot fit property {curated!r} (expected one of {', '.join(known)})")


def names() -> tuple[str, ...]:
    return tuple(REGISTRY)


def activity_names() -> tuple[str, ...]:
    """The properties a fit at one temperature takes (ln gamma± and phi)."""
    return tuple(name for name, p in REGISTRY.items() if p.always_listed)


def per_point(kind: np.ndarray, by_property: Mapping[str, float]) -> np.ndarray:
    """Each point's value of a per-property setting (a tolerance), NaN where it has none."""
    out = np.full(np.shape(kind), np.nan)
    for name, value in by_property.items():
        out[kind == name] = value
    return out


# -- the built-in properties --------------------------------------------------------------------
def _gamma(m, v, u, nu, dataset):
    if np.any(v <= 0):
        raise UserError(f"fit data {dataset!r}: gamma± must be positive")
    return np.log(v), u / v


def _ln(m, v, u, nu, dataset):
    return v, u


def _log10(m, v, u, nu, dataset):
    return v * np.log(10.0), u * np.log(10.0)


def _water_activity(m, v, u, nu, dataset):
    if nu is None:
        raise UserError("fit data: water activities need nu (ions per formula unit)")
    if np.any(v <= 0) or np.any(v > 1):
        raise UserError(f"fit data {dataset!r}: water activity must lie in (0, 1]")
    scale = nu * m * MOLAR_MASS_WATER
    return -np.log(v) / scale, u / (v * scale)


LN_GAMMA_PROPERTY = register_property(FittedProperty(
    "ln_gamma", "ln_gamma_pm", "ln γ±", "natural log of the mean activity coefficient",
    {"gamma_pm": _gamma, "ln_gamma_pm": _ln, "log10_gamma_pm": _log10}, "ln gamma±"))
OSMOTIC_PROPERTY = register_property(FittedProperty(
    "osmotic", "osmotic", "φ", "osmotic coefficient",
    {"osmotic": _ln, "water_activity": _water_activity}, "phi"))


def _thermal(m, v, u, nu, dataset):
    return v, u


# Thermal data (issue 21): compared with the model's L_phi and C_p,phi from the temperature
# derivatives of its excess Gibbs energy (saltbench.fitting.thermal_points); fitted across
# temperatures only. Curated values are in J/mol and J/(K mol), fitted as they are.
L_PHI_PROPERTY = register_property(FittedProperty(
    "L_phi", "relative_enthalpy", "L_φ", "apparent molar relative enthalpy (J/mol)",
    {"L_phi": _thermal}, "L_phi", always_listed=False))
CP_PHI_PROPERTY = register_property(FittedProperty(
    "Cp_phi", "relative_heat_capacity", "C_p,φ", "apparent molar heat capacity (J/(K mol))",
    {"Cp_phi": _thermal}, "Cp_phi", always_listed=False))
