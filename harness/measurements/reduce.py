"""One measurement set -> reduced values with uncertainties, by the method the set names.

A thin dispatcher over the reduction modules of this package (each cites its own equations):
EMF cells (:mod:`~saltbench.measurements.emf_cell`), electrode calibrations
(:mod:`~saltbench.measurements.nernst`), isopiestic ratios
(:mod:`~saltbench.measurements.isopiestic`) and water activity or vapour pressure
(:mod:`~saltbench.measurements.water_activity`). No store access: the reference osmotic
coefficient of an isopiestic set is passed in as a function.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from saltbench.curation.readings import MeasurementSet
from saltbench.curation.reduction_methods import Method, method_for
from saltbench.curation.temperatures import temperature_groups
from saltbench.errors import UserError
from saltbench.measurements.emf_cell import (
    CellSpec,
    StandardEmf,
    extrapolate_standard_emf,
    gamma_from_emf,
)
from saltbench.measurements.emf_mixture import gamma_from_emf_mixture
from saltbench.measurements.isopiestic import osmotic_from_isopiestic
from saltbench.measurements.nernst import CALIBRATION_CAUTION, calibrate_electrode, thermal_voltage
from saltbench.measurements.water_activity import (
    osmotic_from_vapour_pressure,
    osmotic_from_water_activity,
)

OsmoticFunction = Callable[[np.ndarray], np.ndarray]


@dataclass
class Reduction:
    """What a reduction produced: a property at molalities (or, for a calibration, no dataset)."""

    method: Method
    property: str | None  # "gamma_pm", "osmotic" or None
    molality: np.ndarray
    value: np.ndarray
    u_value: np.ndarray
    note: str
    details: dict[str, object] = field(default_factory=dict)  # JSON-able
    extrapolation: StandardEmf | None = None
    cautions: tuple[str, ...] = ()
    # a mixture cell: the background salt's molality at each value (``molality`` is the measured
    # salt's, ``value`` ln gamma± of it in the mixture, ``property`` 'ln_gamma_pm')
    background_molality: np.ndarray | None = None
    # readings at several temperatures: each value's temperature in K (None: the set's one) and
    # the E° extrapolation at each temperature, coldest first
    temperature_k: np.ndarray | None = None
    extrapolations: tuple[StandardEmf, ...] = ()


def temperature_parts(ms: MeasurementSet) -> list[MeasurementSet]:
    """An EMF set split at its temperatures (readings within ``SAME_TEMPERATURE_K`` are at one,
    their mean): one set per temperature, coldest first; the set itself when it has one."""
    from dataclasses import replace

    if ms.point_temperature is None:
        return [ms]
    parts = []
    for t, idx in temperature_groups(ms.point_temperature):
        parts.append(replace(ms, temperature_k=round(t, 6), molality=ms.molality[idx],
                             u_molality=ms.u_molality[idx], activity=ms.activity[idx],
                             reading=ms.reading[idx], u_reading=ms.u_reading[idx],
                             lines=[ms.lines[i] for i in idx], point_temperature=None))
    return parts


def cell_of(ms: MeasurementSet) -> CellSpec:
    s = ms.settings
    return CellSpec(ms.electrolyte, s.get("electrons"), float(s.get("salt_per_reaction", 1.0)),
                    str(s.get("cell", "")))


def standard_emf_extrapolation(ms: MeasurementSet) -> StandardEmf:
    """E° of an EMF set by extrapolation over its readings up to ``extrapolation_up_to``."""
    if ms.kind != "emf":
        raise UserError(f"measurement set {ms.key} holds {ms.kind} readings, not cell EMFs")
    if ms.background_molality is not None:
        ms = _measured_salt_alone(ms)
    parts = temperature_parts(ms)
    if len(parts) > 1:
        raise UserError(f"measurement set {ms.key} holds readings at {len(parts)} temperatures; "
                        "'saltbench readings reduce' finds E° at each")
    ms = parts[0]
    up_to = float(ms.settings.get("extrapolation_up_to") or 0.1)
    sel = ms.molality <= up_to * (1 + 1e-12)
    if sel.sum() < 4:
        raise UserError(f"measurement set {ms.key}: the E° extrapolation needs at least 4 readings "
                        f"at or below {up_to:g} mol/kg (extrapolation_up_to), found {int(sel.sum())}")
    a = ms.settings.get("ion_size")
    return extrapolate_standard_emf(cell_of(ms), ms.molality[sel], ms.reading[sel],
                                    ms.temperature_k, u_emf=ms.u_reading[sel],
                                    ion_size=None if a is None else float(a))


def _measured_salt_alone(ms: MeasurementSet) -> MeasurementSet:
    """The readings of a mixture set with no background salt (background_molality 0)."""
    from dataclasses import replace

    assert ms.background_molality is not None
    alone = ms.background_molality == 0
    pick = lambda a: a[alone]
    return replace(ms, molality=pick(ms.molality), u_molality=pick(ms.u_molality),
                   activity=pick(ms.activity), reading=pick(ms.reading),
                   u_reading=pick(ms.u_reading), lines=[n for n, a in zip(ms.lines, alone) if a],
                   background_molality=None)


def _emf_mixture(ms: MeasurementSet, method: Method) -> Reduction:
    """ln gamma± of the measured salt in the mixture, eq. (2) of
    :mod:`~saltbench.measurements.emf_mixture`; E° given, or extrapolated from the readings of the
    measured salt alone."""
    from saltbench.chemistry.electrolyte import parse_formula

    assert ms.background_molality is not None
    cell = cell_of(ms)
    known = {**ms.declared_ions, ms.electrolyte.cation.formula: ms.electrolyte.cation,
             ms.electrolyte.anion.formula: ms.electrolyte.anion}
    background = parse_formula(str(ms.settings["background"]), known)
    ext = None
    if method.name == "nernst-mixture-given-e0":
        e0, u_e0, how = _given_e0(ms, method)
    else:
        if not np.any(ms.background_molality == 0):
            raise UserError(f"measurement set {ms.key}: no readings of {ms.electrolyte.name} alone "
                            "(background_molality 0) to extrapolate E° from; give e_standard")
        ext = standard_emf_extrapolation(ms)
        e0, u_e0 = ext.e_standard, ext.u_e_standard
        how = (f"E° = {e0:.6f} V ± {u_e0:.2g} V extrapolated over {ext.molality.size} readings of "
               f"{ms.electrolyte.name} alone up to {float(ext.molality.max()):g} mol/kg")
    red = gamma_from_emf_mixture(cell, background, ms.molality, ms.background_molality, ms.reading,
                                 e0, ms.temperature_k, u_emf=ms.u_reading, u_e_standard=u_e0,
                                 u_molality=_u_molality(ms))
    details: dict[str, object] = {"e_standard_v": e0, "u_e_standard_v": u_e0,
                                  "u_ln_gamma_common": red.u_ln_gamma_common,
                                  "cell": cell.description, "background": background.name}
    if ext is not None:
        details.update({"ion_size_angstrom": ext.ion_size, "slope_v_kg_per_mol": ext.slope,
                        "residual_sd_v": ext.residual_sd, "chi2_reduced": ext.chi2_reduced})
    return Reduction(method, "ln_gamma_pm", red.molality, red.ln_gamma_pm, red.u_ln_gamma_pm,
                     f"{how}; background {background.name}, taken as exact; u(ln gamma±) includes "
                     "the common u(E°)", details, ext, background_molality=ms.background_molality)


def _given_e0(ms: MeasurementSet, method: Method) -> tuple[float, float, str]:
    """E° and its uncertainty as the readings file gives them, and how to say so."""
    e0 = ms.settings.get("e_standard")
    if e0 is None:
        raise UserError(f"measurement set {ms.key}: {method.name} needs e_standard in the file")
    e0, u_e0 = float(e0), float(ms.settings.get("u_e_standard") or 0.0)
    return e0, u_e0, f"E° = {e0:.6f} V given (u = {u_e0:.2g} V)"


def _u_molality(ms: MeasurementSet) -> np.ndarray:
    return np.nan_to_num(ms.u_molality, nan=0.0)


def _emf_by_temperature(ms: MeasurementSet, method: Method) -> Reduction:
    """An EMF series at several temperatures: at each, E°(T) by the same extrapolation as at one
    temperature (eq. (2) of :mod:`~saltbench.measurements.emf_cell`, with the Debye-Hückel
    constants and the Nernst factor k = s nu R T / (n F) of that temperature, R and F from
    CODATA), then gamma± of each reading at its temperature with E°(T)."""
    if method.name != "nernst-extrapolated-e0":
        raise UserError(f"measurement set {ms.key}: readings at several temperatures need E° at "
                        f"each; {method.name} takes one given E° (use e_standard: extrapolate)")
    cell = cell_of(ms)
    exts, reds, temps, rows = [], [], [], []
    for part in temperature_parts(ms):
        t = part.temperature_k
        try:
            ext = standard_emf_extrapolation(part)
        except UserError as exc:
            raise UserError(f"{exc} (readings at {t:.2f} K)") from None
        red = gamma_from_emf(cell, part.molality, part.reading, ext.e_standard, t, u_emf=part.u_reading,
                             u_e_standard=ext.u_e_standard, u_molality=_u_molality(part))
        exts.append(ext)
        reds.append(red)
        temps.append(np.full(part.molality.size, t))
        rows.append({"temperature_k": t, "e_standard_v": ext.e_standard, "u_e_standard_v": ext.u_e_standard,
                     "nernst_slope_v": thermal_voltage(t), "k_v": cell.k(t),
                     "ion_size_angstrom": ext.ion_size, "u_ion_size_angstrom": ext.u_ion_size,
                     "ion_size_fitted": ext.ion_size_fitted, "slope_v_kg_per_mol": ext.slope,
                     "residual_sd_v": ext.residual_sd, "chi2_reduced": ext.chi2_reduced,
                     "n_readings": int(part.molality.size), "n_extrapolation": int(ext.molality.size),
                     "u_ln_gamma_common": red.u_ln_gamma_common})
    listing = "; ".join(f"{r['temperature_k']:.2f} K: E° = {r['e_standard_v']:.6f} V ± "
                        f"{r['u_e_standard_v']:.2g} V" for r in rows)
    note = (f"E°(T) extrapolated at each of {len(rows)} temperatures up to "
            f"{float(ms.settings.get('extrapolation_up_to') or 0.1):g} mol/kg ({listing}); "
            "u(gamma±) includes the common u(E°) of its temperature")
    details: dict[str, object] = {"cell": cell.description, "e_standard_by_temperature": rows}
    return Reduction(method, "gamma_pm", np.concatenate([r.molality for r in reds]),
                     np.concatenate([r.gamma_pm for r in reds]), np.concatenate([r.u_gamma_pm for r in reds]),
                     note, details, temperature_k=np.concatenate(temps), extrapolations=tuple(exts))


def _emf(ms: MeasurementSet, method: Method) -> Reduction:
    parts = temperature_parts(ms)
    if len(parts) > 1:
        return _emf_by_temperature(ms, method)
    own_t = ms.point_temperature is not None  # a temperature column of one temperature
    ms = parts[0]
    cell = cell_of(ms)
    ext = None
    if method.name == "nernst-given-e0":
        e0, u_e0, how = _given_e0(ms, method)
    else:
        ext = standard_emf_extrapolation(ms)
        e0, u_e0 = ext.e_standard, ext.u_e_standard
        how = (f"E° = {e0:.6f} V ± {u_e0:.2g} V extrapolated over {ext.molality.size} readings "
               f"up to {float(ext.molality.max()):g} mol/kg, ion size "
               f"{ext.ion_size:.2f} Å{' fitted' if ext.ion_size_fitted else ' fixed'}")
    red = gamma_from_emf(cell, ms.molality, ms.reading, e0, ms.temperature_k, u_emf=ms.u_reading,
                         u_e_standard=u_e0, u_molality=_u_molality(ms))
    details: dict[str, object] = {"e_standard_v": e0, "u_e_standard_v": u_e0,
                                  "u_ln_gamma_common": red.u_ln_gamma_common,
                                  "cell": cell.description}
    if ext is not None:
        details.update({"ion_size_angstrom": ext.ion_size, "u_ion_size_angstrom": ext.u_ion_size,
                        "ion_size_fitted": ext.ion_size_fitted, "slope_v_kg_per_mol": ext.slope,
                        "residual_sd_v": ext.residual_sd, "chi2_reduced": ext.chi2_reduced})
    return Reduction(method, "gamma_pm", red.molality, red.gamma_pm, red.u_gamma_pm,
                     f"{how}; u(gamma±) includes the common u(E°)", details, ext,
                     temperature_k=np.full(red.molality.size, ms.temperature_k) if own_t else None)


def _calibration(ms: MeasurementSet, method: Method) -> Reduction:
    charge = int(ms.settings["charge"])
    cal = calibrate_electrode(ms.activity, ms.reading, ms.temperature_k, charge)
    details = {"ion": ms.settings["ion"], "slope_v_per_decade": cal.slope,
               "u_slope_v_per_decade": cal.u_slope, "intercept_v": cal.intercept,
               "u_intercept_v": cal.u_intercept, "nernst_slope_v_per_decade": cal.nernst_slope,
               "slope_percent": cal.slope_percent, "u_slope_percent": cal.u_slope_percent,
               "residuals_v": [float(x) for x in cal.residuals]}
    return Reduction(method, None, ms.molality, np.array([]), np.array([]),
                     f"slope {cal.slope_percent:.2f} % of the Nernst slope", details,
                     cautions=(CALIBRATION_CAUTION,))


def _isopiestic(ms: MeasurementSet, method: Method, reference, reference_osmotic: OsmoticFunction | None,
                reference_label: str) -> Reduction:
    if reference_osmotic is None or reference is None:
        raise UserError(f"measurement set {ms.key}: the reference osmotic coefficient is missing")
    u_phi_ref = float(ms.settings.get("u_reference_osmotic") or 0.0)
    res = osmotic_from_isopiestic(ms.electrolyte, ms.molality, reference, ms.reading,
                                  reference_osmotic, u_molality=_u_molality(ms),
                                  u_reference_molality=ms.u_reading,
                                  u_reference_osmotic=u_phi_ref)
    note = (f"reference {reference.name}, phi_ref from {reference_label}"
            f"{'' if u_phi_ref else '; u(phi_ref) taken as 0 (none given in the file)'}")
    return Reduction(method, "osmotic", res.molality, res.osmotic, res.u_osmotic, note,
                     {"reference": reference.name, "reference_osmotic_from": reference_label,
                      "isopiestic_ratio": [float(x) for x in res.isopiestic_ratio],
                      "water_activity": [float(x) for x in res.water_activity]})


def reduce_set(ms: MeasurementSet, method: str | None = None, *, reference=None,
               reference_osmotic: OsmoticFunction | None = None,
               reference_label: str = "") -> Reduction:
    """Reduce ``ms`` by ``method`` (default: the method the set names)."""
    m = method_for(ms.method_kind, method or ms.method)
    if ms.background_molality is not None:
        return _emf_mixture(ms, m)
    if ms.kind == "emf":
        return _emf(ms, m)
    if ms.kind == "electrode_calibration":
        return _calibration(ms, m)
    if ms.kind == "isopiestic":
        return _isopiestic(ms, m, reference, reference_osmotic, reference_label)
    if ms.kind == "water_activity":
        res = osmotic_from_water_activity(ms.electrolyte, ms.molality, ms.reading,
                                          u_water_activity=ms.u_reading, u_molality=_u_molality(ms))
        note = "phi = -ln a_w / (nu m M_w)"
    else:
        s = ms.settings
        res = osmotic_from_vapour_pressure(
            ms.electrolyte, ms.molality, ms.reading, s.get("saturation_pressure_pa"),
            ms.temperature_k, u_pressure_pa=ms.u_reading,
            u_saturation_pressure_pa=float(s.get("u_saturation_pressure_pa") or 0.0),
            u_molality=_u_molality(ms))
        p_star = "given" if s.get("saturation_pressure_pa") else "IAPWS-IF97"
        note = f"{res.note}; p* {p_star}"
    return Reduction(m, "osmotic", res.molality, res.osmotic, res.u_osmotic, note,
                     {"water_activity": [float(x) for x in res.water_activity]})
