"""``data check`` for mixture datasets: the checks that apply to points whose abscissa is a
composition, each against a limit stated here.

1. Bounds. The reader already refuses what cannot be (gamma± or phi not positive, a_w outside
   (0, 1]); this check flags what is possible but implausible for an aqueous salt solution, as a
   slip usually is: gamma± outside ``GAMMA_RANGE``, phi outside ``OSMOTIC_RANGE``, a_w outside
   ``WATER_ACTIVITY_RANGE`` (a_w = 1 is pure water, not a solution). The ranges are wider than
   any tabulated aqueous salt at 25 °C we know of (common practice, no source).
2. Ionic strength. Each point's I = 1/2 sum m_i z_i^2 (IUPAC Green Book, 3rd ed., 2007, 2.13)
   is reported as a range per dataset and flagged above ``MAX_IONIC_STRENGTH`` (mol/kg), beyond
   the most concentrated aqueous tables (common practice, no source).
3. Duplicates. Datasets of one family (the same salts, property and temperature) that give a
   point at the same composition: the same value again is a copy that a fit would count twice;
   values further apart than ``DUPLICATE_SIGMAS`` combined standard uncertainties disagree.
   (Within one file a composition given twice is refused when the file is read.)
4. Gibbs-Duhem does not apply and is reported as not applicable, never skipped silently: the
   Gibbs-Duhem equation of a mixture ties the solvent's activity to the activity coefficients
   of every solute together, so neither one salt's gamma± in a mixture nor the mixture's phi
   can be checked by it alone (the cross-differential relation between two salts needs both
   salts' values at the same compositions).
"""

from __future__ import annotations

import math
from collections import defaultdict
from dataclasses import dataclass

import numpy as np

from saltbench.curation.checks import CheckReport, Finding
from saltbench.curation.mixtures import parse_system

GAMMA_RANGE = (1e-3, 1e3)
OSMOTIC_RANGE = (0.1, 6.0)
WATER_ACTIVITY_RANGE = (0.01, 1.0)  # open at 1: pure water
MAX_IONIC_STRENGTH = 30.0
DUPLICATE_SIGMAS = 3.0
#: two compositions are the same when every ion molality agrees to this many significant digits
SAME_COMPOSITION_DIGITS = 9

GIBBS_DUHEM_NOT_APPLICABLE = (
    "not applicable to mixture data: the Gibbs-Duhem equation of a mixture ties the water activity "
    "to every solute's activity coefficient together, so {what} cannot be checked by it alone")


@dataclass(frozen=True)
class MixturePointRecord:
    """One stored mixture point, as the file printed it, with its resolved composition."""

    key: str
    system: str
    property: str  # as printed: gamma_pm, ln_gamma_pm, osmotic, water_activity
    salt: str | None
    temperature_k: float
    ions: tuple[str, ...]
    molality: tuple[float, ...]
    ionic_strength: float
    value_printed: float
    u_printed: float
    line: int | None
    file: str


def _describe(p: MixturePointRecord) -> str:
    parts = ", ".join(f"m({ion}) = {m:g}" for ion, m in zip(p.ions, p.molality) if m)
    return f"at {parts} (I = {p.ionic_strength:g} mol/kg)"


def _linear(p: MixturePointRecord) -> float:
    return math.exp(p.value_printed) if p.property == "ln_gamma_pm" else p.value_printed


def _bounds(p: MixturePointRecord) -> tuple[str, tuple[float, float]] | None:
    """What is out of bounds and the bounds, or None."""
    v = _linear(p)
    if p.property in ("gamma_pm", "ln_gamma_pm"):
        lo, hi = GAMMA_RANGE
        if not lo <= v <= hi:
            return f"gamma±({p.salt}) = {v:.4g}", GAMMA_RANGE
    elif p.property == "osmotic":
        lo, hi = OSMOTIC_RANGE
        if not lo <= v <= hi:
            return f"phi = {v:.4g}", OSMOTIC_RANGE
    else:
        lo, hi = WATER_ACTIVITY_RANGE
        if not lo <= v < hi:
            return f"a_w = {v:.6g}", WATER_ACTIVITY_RANGE
    return None


def _family(p: MixturePointRecord) -> tuple:
    salts = frozenset(s.name for s in parse_system(p.system))
    basis = "gamma" if p.property in ("gamma_pm", "ln_gamma_pm") else p.property
    return (salts, basis, p.salt, round(p.temperature_k, 2))


def composition_key(p: MixturePointRecord) -> tuple[tuple[str, float], ...]:
    """Two points have the same composition when every ion molality agrees to
    ``SAME_COMPOSITION_DIGITS`` significant digits (ions in any order)."""
    return tuple(sorted((ion, float(f"{m:.{SAME_COMPOSITION_DIGITS}g}")) for ion, m in zip(p.ions, p.molality)))


def _uncertainty_linear(p: MixturePointRecord) -> float:
    return p.u_printed * _linear(p) if p.property == "ln_gamma_pm" else p.u_printed


def check_mixture_points(points: list[MixturePointRecord]) -> CheckReport:
    """Run the mixture checks over ``points`` (every stored mixture point, or a family's)."""
    rep = CheckReport()
    by_dataset: dict[str, list[MixturePointRecord]] = defaultdict(list)
    for p in points:
        by_dataset[p.key].append(p)
    for key, pts in by_dataset.items():
        first = pts[0]
        n_flag = 0
        for p in pts:
            out = _bounds(p)
            if out is not None:
                what, (lo, hi) = out
                n_flag += 1
                rep.findings.append(Finding("bounds", p.system, key, None, p.line, p.file,
                                            f"{what} {_describe(p)} is outside the plausible {lo:g} to {hi:g}",
                                            _linear(p), hi))
        rep.summary.append({"electrolyte": first.system, "dataset": key, "check": "bounds",
                            "status": "flagged" if n_flag else "passed", "n_points": len(pts)})
        strengths = np.array([p.ionic_strength for p in pts])
        high = [p for p in pts if p.ionic_strength > MAX_IONIC_STRENGTH]
        for p in high:
            rep.findings.append(Finding("ionic-strength", p.system, key, None, p.line, p.file,
                                        f"I = {p.ionic_strength:g} mol/kg {_describe(p)} is above "
                                        f"{MAX_IONIC_STRENGTH:g} mol/kg", p.ionic_strength, MAX_IONIC_STRENGTH))
        rep.summary.append({"electrolyte": first.system, "dataset": key, "check": "ionic-strength",
                            "status": "flagged" if high else "passed", "n_points": len(pts),
                            "min_ionic_strength": float(strengths.min()),
                            "max_ionic_strength": float(strengths.max())})
        what = (f"one salt's gamma±({first.salt}) in a mixture" if first.salt
                else f"the mixture's {'osmotic coefficient' if first.property == 'osmotic' else 'water activity'}")
        rep.summary.append({"electrolyte": first.system, "dataset": key, "check": "gibbs-duhem",
                            "status": "not applicable", "n_points": len(pts),
                            "reason": GIBBS_DUHEM_NOT_APPLICABLE.format(what=what)})
    _duplicates(points, rep)
    return rep


def _compare(a: MixturePointRecord, b: MixturePointRecord, rep: CheckReport) -> None:
    va, vb = _linear(a), _linear(b)
    u = math.hypot(_uncertainty_linear(a), _uncertainty_linear(b))
    if va == vb:
        rep.findings.append(Finding(
            "duplicates", b.system, b.key, None, b.line, b.file,
            f"the same point as {a.key} ({a.file}:{a.line}) {_describe(b)}: a fit would count it twice", vb, None))
    elif abs(va - vb) > DUPLICATE_SIGMAS * u:
        rep.findings.append(Finding(
            "duplicates", b.system, b.key, None, b.line, b.file,
            f"{vb:.6g} {_describe(b)} disagrees with {a.key} ({a.file}:{a.line}), {va:.6g}, by more "
            f"than {DUPLICATE_SIGMAS:g} combined standard uncertainties ({DUPLICATE_SIGMAS * u:.3g})",
            vb - va, DUPLICATE_SIGMAS * u))


def _duplicates(points: list[MixturePointRecord], rep: CheckReport) -> None:
    families: dict[tuple, list[MixturePointRecord]] = defaultdict(list)
    for p in points:
        families[_family(p)].append(p)
    for family in families.values():
        keys = sorted({p.key for p in family})
        if len(keys) < 2:
            continue
        overlaps, before = 0, len(rep.findings)
        buckets: dict[tuple, list[MixturePointRecord]] = defaultdict(list)
        for p in family:
            buckets[composition_key(p)].append(p)
        for bucket in buckets.values():
            for i, a in enumerate(bucket):
                for b in bucket[i + 1:]:
                    if a.key == b.key:
                        continue
                    overlaps += 1
                    _compare(a, b, rep)
        rep.summary.append({"electrolyte": family[0].system, "dataset": " vs ".join(keys), "check": "duplicates",
                            "status": "flagged" if len(rep.findings) > before else "passed",
                            "n_points": len(family), "n_same_composition": overlaps})
