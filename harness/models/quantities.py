"""What a model can be asked to compute: quantities by name, and the registry of their kinds.

A :class:`Quantity` is a kind and, where the kind needs one, what it is of: an ion
(``Quantity("ln_gamma", "Na+")``), a neutral salt (``Quantity("ln_gamma_pm", "NaCl")``) or the
solution as a whole (``Quantity("osmotic")``). Adding a property later is adding a kind with
:func:`register_kind`; the model contract has no method per quantity.

The activity kinds are dimensionless and on the molality scale:
- ``ln_gamma``: natural log of one ion's molal activity coefficient. Single-ion values rest on a
  non-thermodynamic convention (Guggenheim, J. Phys. Chem. 33, 842 (1929)); a model that gives
  them states its convention (``SolutionModel.single_ion_convention``).
- ``ln_gamma_pm``: natural log of the mean molal activity coefficient of a neutral salt,
  ln gamma± = (nu+ ln gamma+ + nu- ln gamma-) / nu (IUPAC Green Book, 3rd ed., 2007, 2.13).
- ``osmotic``: the molal osmotic coefficient, phi = -ln a_w / (M_w sum_i m_i) (same source).
- ``water_activity``: a_w, from phi by the same relation.

The thermal kinds (issue 21) follow from the temperature derivatives of the excess Gibbs energy
at constant composition and pressure (Pitzer, Activity Coefficients in Electrolyte Solutions,
2nd ed., 1991, ch. 3; Harned and Owen, 3rd ed., 1958, ch. 8; from memory of both). The harness
works them out for any model (``saltbench.models.thermal``); a model need not give them:
- ``relative_enthalpy``: the apparent molar relative enthalpy of a neutral salt, L_phi (J/mol).
- ``relative_heat_capacity``: the apparent molar heat capacity of a neutral salt relative to its
  value at infinite dilution, C_p,phi - C°_p,2 = (d L_phi / d T)_p,m (J/(K mol)).
- ``water_relative_enthalpy``: the partial molar relative enthalpy of water, L_1 (J/mol).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal, NamedTuple

Subject = Literal["ion", "salt", "solution"]


class Quantity(NamedTuple):
    """One computed property: ``kind`` (a registered name) and what it is ``of`` ('' for the
    solution as a whole)."""

    kind: str
    of: str = ""

    def __str__(self) -> str:
        return f"{self.kind}({self.of})" if self.of else self.kind


@dataclass(frozen=True)
class QuantityKind:
    """A registered kind of quantity: its name, what it is of, unit and meaning."""

    name: str
    subject: Subject
    unit: str
    description: str


_KINDS: dict[str, QuantityKind] = {}


def register_kind(kind: QuantityKind) -> QuantityKind:
    """Make a new kind of quantity known (its name must be new)."""
    if kind.name in _KINDS and _KINDS[kind.name] != kind:
        raise ValueError(f"quantity kind {kind.name!r} is registered already")
    _KINDS[kind.name] = kind
    return kind


def kind_of(quantity: Quantity | str) -> QuantityKind:
    name = quantity.kind if isinstance(quantity, Quantity) else quantity
    try:
        return _KINDS[name]
    except KeyError:
        raise KeyError(f"unknown quantity kind {name!r} (known: {', '.join(_KINDS)})") from None


def kinds() -> tuple[QuantityKind, ...]:
    return tuple(_KINDS.values())


LN_GAMMA = register_kind(QuantityKind(
    "ln_gamma", "ion", "1", "natural log of one ion's molal activity coefficient (conventional)"))
LN_GAMMA_PM = register_kind(QuantityKind(
    "ln_gamma_pm", "salt", "1", "natural log of a neutral salt's mean molal activity coefficient"))
OSMOTIC_KIND = register_kind(QuantityKind(
    "osmotic", "solution", "1", "molal osmotic coefficient of the solvent"))
WATER_ACTIVITY_KIND = register_kind(QuantityKind(
    "water_activity", "solution", "1", "activity of water"))

RELATIVE_ENTHALPY_KIND = register_kind(QuantityKind(
    "relative_enthalpy", "salt", "J/mol", "apparent molar relative enthalpy L_phi of a neutral salt"))
RELATIVE_HEAT_CAPACITY_KIND = register_kind(QuantityKind(
    "relative_heat_capacity", "salt", "J/(K mol)",
    "apparent molar heat capacity of a neutral salt relative to infinite dilution, C_p,phi - C°_p,2"))
WATER_RELATIVE_ENTHALPY_KIND = register_kind(QuantityKind(
    "water_relative_enthalpy", "solution", "J/mol", "partial molar relative enthalpy of water L_1"))

OSMOTIC = Quantity("osmotic")
WATER_ACTIVITY = Quantity("water_activity")


def ln_gamma(ion: str) -> Quantity:
    return Quantity("ln_gamma", ion)


def ln_gamma_pm(salt: str) -> Quantity:
    return Quantity("ln_gamma_pm", salt)
