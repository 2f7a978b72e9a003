"""The reduction methods a measurement set can name, each with a version.

A method's version goes up whenever a fix changes the numbers it produces, so a reduced dataset
records exactly which reduction made it and ``saltbench readings reduce`` can tell a stale
reduction from a current one. The list belongs to the readings file format (a file names its
method; the store records the version that reduced it); the reductions themselves are in
:mod:`saltbench.measurements`.
"""

from __future__ import annotations

from dataclasses import dataclass

from saltbench.errors import UserError

KINDS = ("emf", "electrode_calibration", "isopiestic", "water_activity", "vapour_pressure")


@dataclass(frozen=True)
class Method:
    name: str
    version: str
    kind: str
    produces: str | None  # dataset property, or None when the result is not a dataset
    description: str


METHODS: dict[str, Method] = {m.name: m for m in (
    Method("nernst-given-e0", "1", "emf", "gamma_pm",
           "Nernst equation of a cell without liquid junction, standard EMF given"),
    Method("nernst-extrapolated-e0", "1", "emf", "gamma_pm",
           "Nernst equation of a cell without liquid junction, standard EMF by extrapolation to "
           "infinite dilution with the extended Debye-Hückel form (Hitchcock)"),
    # an emf file with a 'background' salt: gamma± of the measured salt in a mixture; the kind
    # 'emf_mixture' keeps these out of the one-salt file's choices
    Method("nernst-mixture-given-e0", "1", "emf_mixture", "ln_gamma_pm",
           "Nernst equation of a cell without liquid junction in a mixture with a background salt "
           "sharing one ion, standard EMF given"),
    Method("nernst-mixture-extrapolated-e0", "1", "emf_mixture", "ln_gamma_pm",
           "Nernst equation of a cell without liquid junction in a mixture with a background salt "
           "sharing one ion, standard EMF extrapolated (Hitchcock) from the file's readings of the "
           "measured salt alone"),
    Method("electrode-slope", "1", "electrode_calibration", None,
           "least-squares line E against log10 a; slope as a percentage of the Nernst slope"),
    Method("isopiestic-ratio", "1", "isopiestic", "osmotic",
           "phi = (nu_ref m_ref / nu m) phi_ref, phi_ref from a stored model and parameter set"),
    Method("osmotic-from-water-activity", "1", "water_activity", "osmotic",
           "phi = -ln a_w / (nu m M_w)"),
    Method("vapour-pressure-ratio", "1", "vapour_pressure", "osmotic",
           "a_w = p / p* (ideal vapour), then phi = -ln a_w / (nu m M_w)"),
)}

DEFAULT_METHOD = {"electrode_calibration": "electrode-slope", "isopiestic": "isopiestic-ratio",
                  "water_activity": "osmotic-from-water-activity",
                  "vapour_pressure": "vapour-pressure-ratio"}


def default_method(kind: str, e_standard_given: bool = False) -> str:
    if kind == "emf":
        return "nernst-given-e0" if e_standard_given else "nernst-extrapolated-e0"
    if kind == "emf_mixture":
        return "nernst-mixture-given-e0" if e_standard_given else "nernst-mixture-extrapolated-e0"
    return DEFAULT_METHOD[kind]


def method_for(kind: str, name: str) -> Method:
    """The method ``name`` if it reduces readings of ``kind``; a UserError naming the choices."""
    m = METHODS.get(name)
    if m is None or m.kind != kind:
        choices = ", ".join(n for n, x in METHODS.items() if x.kind == kind)
        raise UserError(f"unknown reduction method {name!r} for {kind} readings (choose: {choices})")
    return m
