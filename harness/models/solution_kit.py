"""The contract kit's checks of ``compute``: keys and shapes, batches, derivatives, mixtures.

Called by :func:`saltbench.models.contract_kit.check_model`; each problem is one line.

1. For one salt of each supported test electrolyte, and for each test mixture when the model
   takes mixtures: ``compute`` returns each quantity it declares (``computes_for`` the
   composition) and was asked for, shaped (S, N), finite; no undeclared quantity kinds; derivatives only for keys in
   ``wrt``, each (S, N).
2. Batches: two parameter sets in one request give what two requests of one set give (1e-12).
3. Analytic derivatives against central finite differences in each key (relative 1e-5,
   absolute 1e-8, as for the one-salt Jacobian).
4. Mixtures, for a model with ``mixtures``:
   - the Debye-Hückel limiting law for every ion at I = 1e-6 mol/kg, ln gamma_i / (-A z_i^2
     sqrt(I)) within the kit's tolerance of 1 (Debye and Hückel, Phys. Z. 24, 185 (1923));
   - the cross-differential identity between the salts j, k of the mixture,
     nu_j d ln gamma±_j / d m_k = nu_k d ln gamma±_k / d m_j, both sides by central differences
     (the derivatives of one excess Gibbs energy commute; e.g. Robinson and Stokes, Electrolyte
     Solutions, 2nd ed., 1959, ch. 2; Pitzer and Kim, J. Am. Chem. Soc. 96, 5701 (1974) use it
     for mixtures); tolerance 1e-6 relative to the larger side, plus 1e-8. A model whose
     published mixing rule is not derivable from one excess Gibbs energy declares so
     (``SolutionModel.mixing_rule_defect``: the largest absolute defect in kg/mol it is known
     to have for that composition and those parameters); the kit adds that declared number to
     its tolerance, so the exception is written down in the model and a defect that grows
     still fails (:func:`cross_differential_defect` measures it);
   - Gibbs-Duhem along the dilution path of the mixture: an analytic phi equals
     1 + [sum_j nu_j m_j (ln gamma±_j(m) - int_0^1 ln gamma±_j(m u^2) 2u du)] / sum_i m_i to
     1e-8, the integral by the harness's Gauss-Legendre quadrature.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte, parse_formula
from saltbench.chemistry.gibbs_duhem import dilution_weights, unit_nodes
from saltbench.chemistry.solution import Composition
from saltbench.models.contract import Conditions, ParameterKey, Request, SolutionModel
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, Quantity, kinds, ln_gamma, ln_gamma_pm
from saltbench.water.debye_huckel import DebyeHuckel

#: Test mixtures (salt formulas), each taken at the molalities of MIXTURE_MOLALITIES.
TEST_MIXTURES = (("NaCl", "KCl"), ("NaCl", "MgSO4"), ("NaCl", "CaCl2", "Na2SO4"))
MIXTURE_MOLALITIES = (0.05, 0.3, 1.0)  # mol/kg of each salt, scaled below the model's range
DILUTE_IONIC_STRENGTH = 1e-6
CROSS_RTOL = 1e-6
CROSS_ATOL = 1e-8
GIBBS_DUHEM_TOLERANCE = 1e-8
BATCH_RTOL = 1e-12
JACOBIAN_RTOL = 1e-5
JACOBIAN_ATOL = 1e-8

Report = Callable[[str | None, str], None]


def _request(comp: Composition, values: Mapping[ParameterKey, float], dh: DebyeHuckel,
             quantities: tuple[Quantity, ...], wrt: tuple[ParameterKey, ...] = (),
             sets: int = 1, shift: Mapping[ParameterKey, float] | None = None) -> Request:
    params = {}
    for k, v in values.items():
        arr = np.full((sets, 1), float(v))
        if shift and k in shift:
            arr[1:, 0] += shift[k]
        params[k] = arr
    return Request(comp, quantities, params, Conditions.single(dh, comp.n), wrt)


def _quantities(model: SolutionModel, comp: Composition) -> tuple[Quantity, ...]:
    out: list[Quantity] = []
    gives = model.computes_for(comp)
    if "ln_gamma" in gives:
        out += [ln_gamma(n) for n in comp.names]
    out += [ln_gamma_pm(s.name) for s in comp.salts]
    for q in (OSMOTIC, WATER_ACTIVITY):
        if q.kind in gives:
            out.append(q)
    return tuple(out)


def keyed_values(model: SolutionModel, comp: Composition,
                 by_name: Mapping[str, float]) -> dict[ParameterKey, float]:
    """Every key of ``model`` for ``comp`` at the value of its parameter in ``by_name``."""
    return {k: float(by_name.get(p.name, p.default)) for k, p in model.keys_for(comp).items()}


def check_compute(model: SolutionModel, comp: Composition, by_name: Mapping[str, float],
                  dh: DebyeHuckel, label: str, report: Report) -> dict[Quantity, np.ndarray] | None:
    """Checks 1-3 on one composition; returns the values (one set) when they are usable."""
    values = keyed_values(model, comp, by_name)
    wanted = _quantities(model, comp)
    free = tuple(k for k, p in model.keys_for(comp).items() if not p.fixed)
    try:
        out = model.compute(_request(comp, values, dh, wanted, free))
    except Exception as exc:  # the kit reports, it does not crash on the plugin's bug
        report(label, f"compute raised {type(exc).__name__}: {exc}")
        return None
    known = {k.name for k in kinds()}
    got: dict[Quantity, np.ndarray] = {}
    for q, v in out.values.items():
        if q.kind not in known:
            report(label, f"compute returned an unknown quantity kind {q.kind!r}")
            continue
        arr = np.asarray(v, dtype=float)
        if arr.shape != (1, comp.n):
            report(label, f"compute: {q} has shape {arr.shape}, expected (1, {comp.n})")
        elif not np.all(np.isfinite(arr)):
            report(label, f"compute: {q} is not finite")
        else:
            got[q] = arr[0]
    for q in wanted:
        if q.kind in model.computes_for(comp) and q not in out.values:
            report(label, f"compute did not return {q}, which the model declares it computes")
    for q, d in out.derivatives.items():
        for k, arr in d.items():
            if k not in free:
                report(label, f"compute gave d {q}/d {k}, which was not asked for")
            elif np.asarray(arr).shape != (1, comp.n):
                report(label, f"compute: d {q}/d {k} has shape {np.asarray(arr).shape}")
    _check_batch(model, comp, values, dh, wanted, free, out.values, label, report)
    _check_derivatives(model, comp, values, dh, wanted, out.derivatives, label, report)
    return got


def _check_batch(model, comp, values, dh, wanted, free, single, label, report) -> None:
    if not free:
        return
    k = free[0]
    step = 0.01 * max(1.0, abs(values[k]))
    p = model.keys_for(comp)[k]
    if values[k] + step > p.upper:
        step = -step
    try:
        both = model.compute(_request(comp, values, dh, wanted, (), sets=2,
                                      shift={k: step}))
        other = model.compute(_request(comp, {**values, k: values[k] + step}, dh, wanted))
    except Exception as exc:
        report(label, f"compute of two parameter sets raised {type(exc).__name__}: {exc}")
        return
    for q, v in single.items():
        arr = np.asarray(both.values.get(q), dtype=float)
        if arr.shape != (2, comp.n):
            report(label, f"compute of two parameter sets: {q} has shape {arr.shape}")
            continue
        if not (np.allclose(arr[0], v[0], rtol=BATCH_RTOL, atol=0.0)
                and np.allclose(arr[1], np.asarray(other.values[q])[0], rtol=BATCH_RTOL,
                                atol=0.0)):
            report(label, f"compute of two parameter sets gives another {q} than one set at a time")


def _check_derivatives(model, comp, values, dh, wanted, derivs, label, report) -> None:
    decl = model.keys_for(comp)
    for q, by_key in derivs.items():
        for k, analytic in by_key.items():
            if k not in values:
                continue
            p, x0 = decl[k], values[k]
            h = 1e-6 * max(1.0, abs(x0))
            lo, hi = max(p.lower, x0 - h), min(p.upper, x0 + h)
            if hi <= lo:
                continue
            try:
                up = model.compute(_request(comp, {**values, k: hi}, dh, (q,))).values[q]
                dn = model.compute(_request(comp, {**values, k: lo}, dh, (q,))).values[q]
            except Exception as exc:
                report(label, f"finite differences in {k} failed: {type(exc).__name__}: {exc}")
                continue
            fd = (np.asarray(up) - np.asarray(dn))[0] / (hi - lo)
            arr = np.asarray(analytic, dtype=float).reshape(-1)
            if arr.shape == fd.shape and not np.allclose(arr, fd, rtol=JACOBIAN_RTOL,
                                                         atol=JACOBIAN_ATOL):
                j = int(np.argmax(np.abs(arr - fd)))
                report(label, f"d {q}/d {k} is {arr[j]:.8g}, finite differences give {fd[j]:.8g}")


def kit_mixtures(model: SolutionModel, m_max: float
                 ) -> list[tuple[Composition, dict[str, np.ndarray]]]:
    """The test mixtures the model supports, at molalities below ``m_max`` of each salt, each
    with the molality of each of its salts."""
    out = []
    scale = min(1.0, m_max / max(MIXTURE_MOLALITIES))
    m = np.array(MIXTURE_MOLALITIES) * scale
    for formulas in TEST_MIXTURES:
        salts = [parse_formula(f) for f in formulas]
        if not all(model.supports(s) for s in salts):
            continue
        amounts = {s.name: m * (1.0 + 0.3 * j) for j, s in enumerate(salts)}
        comp = Composition.of_salts([(s, amounts[s.name]) for s in salts])
        if model.supports_composition(comp):
            out.append((comp, amounts))
    return out


def check_mixture(model: SolutionModel, comp: Composition, amounts: Mapping[str, np.ndarray],
                  by_name: Mapping[str, float], dh: DebyeHuckel, tolerance: float,
                  report: Report) -> None:
    """Check 4 on one test mixture (after :func:`check_compute` on it passed)."""
    label = " + ".join(s.name for s in comp.salts)
    values = keyed_values(model, comp, by_name)

    def mean_values(c: Composition) -> dict[str, np.ndarray]:
        return _mean_values(model, c, values, dh)

    try:
        _limiting_law(model, comp, values, dh, tolerance, label, report)
        _cross_differentials(comp, mean_values, label, report,
                             model.mixing_rule_defect(comp, values, dh))
        if "osmotic" in model.computes_for(comp):
            _gibbs_duhem(model, comp, amounts, values, dh, mean_values, label, report)
    except Exception as exc:
        report(label, f"compute raised {type(exc).__name__}: {exc}")


def _limiting_law(model, comp, values, dh, tolerance, label, report) -> None:
    dilute = comp.with_molality(comp.molality[:1] * DILUTE_IONIC_STRENGTH
                                / comp.ionic_strength[0]).rows(slice(0, 1))
    qs = tuple(ln_gamma(n) for n in comp.names) if "ln_gamma" in model.computes_for(comp) else \
        tuple(ln_gamma_pm(s.name) for s in comp.salts)
    out = model.compute(_request(dilute, values, dh, qs)).values
    root = math.sqrt(DILUTE_IONIC_STRENGTH)
    for q in qs:
        if q.kind == "ln_gamma":
            z2 = comp.charges[comp.index(q.of)] ** 2
        else:
            z2 = comp.salt(q.of).zz
        ratio = float(np.asarray(out[q])[0, 0]) / (-dh.a_gamma * z2 * root)
        if abs(ratio - 1.0) > tolerance:
            report(label, f"{q} does not reach the Debye-Hückel limiting law at I = "
                          f"{DILUTE_IONIC_STRENGTH:g}: ratio {ratio:.6g}")


def _salt_columns(comp: Composition, salt: Electrolyte) -> np.ndarray:
    col = np.zeros(len(comp.ions))
    col[comp.index(salt.cation.name)] = salt.nu_cation
    col[comp.index(salt.anion.name)] = salt.nu_anion
    return col


def _mean_values(model: SolutionModel, c: Composition, values: Mapping[ParameterKey, float],
                 dh: DebyeHuckel) -> dict[str, np.ndarray]:
    qs = tuple(ln_gamma_pm(s.name) for s in c.salts)
    out = model.compute(_request(c, values, dh, qs)).values
    return {q.of: np.asarray(out[q])[0] for q in qs}


def _cross_sides(comp: Composition, mean_values
                 ) -> list[tuple[Electrolyte, Electrolyte, np.ndarray, np.ndarray]]:
    """(j, k, nu_j d ln gamma±_j/d m_k, nu_k d ln gamma±_k/d m_j) for every two salts, each
    derivative by central differences (step 1e-5 of the largest molality of the row)."""
    salts = comp.salts
    cols = {s.name: _salt_columns(comp, s) for s in salts}
    d: dict[tuple[str, str], np.ndarray] = {}
    for k in salts:
        h = 1e-5 * comp.molality.max(axis=1)
        up = comp.with_molality(comp.molality + h[:, None] * cols[k.name][None, :])
        dn = comp.with_molality(comp.molality - h[:, None] * cols[k.name][None, :])
        vu, vd = mean_values(up), mean_values(dn)
        for j in salts:
            d[(j.name, k.name)] = (vu[j.name] - vd[j.name]) / (2.0 * h)
    return [(j, k, j.nu * d[(j.name, k.name)], k.nu * d[(k.name, j.name)])
            for a_i, j in enumerate(salts) for k in salts[a_i + 1:]]


def cross_differential_defect(model: SolutionModel, comp: Composition,
                              values: Mapping[ParameterKey, float], dh: DebyeHuckel, *,
                              relative: bool = True) -> float:
    """The largest defect of the cross-differential identity over the rows of ``comp`` and every
    two of its salts: max |L - R| / max(|L|, |R|) (``relative``, the kit's measure) or max
    |L - R| in kg/mol, with L = nu_j d ln gamma±_j / d m_k and R = nu_k d ln gamma±_k / d m_j by
    central differences (about 1e-9 relative for an exact model, from the differencing alone).
    ``values`` gives every key of ``model.keys_for(comp)``."""
    worst = 0.0
    for _, _, left, right in _cross_sides(comp, lambda c: _mean_values(model, c, values, dh)):
        diff = np.abs(left - right)
        if not relative:
            worst = max(worst, float(np.max(diff)))
            continue
        scale = np.maximum(np.abs(left), np.abs(right))
        ok = scale > 0
        if ok.any():
            worst = max(worst, float(np.max(diff[ok] / scale[ok])))
    return worst


def _cross_differentials(comp: Composition, mean_values, label, report,
                         declared: float | None = None) -> None:
    atol = CROSS_ATOL + (declared or 0.0)
    for j, k, left, right in _cross_sides(comp, mean_values):
        bad = np.abs(left - right) > CROSS_RTOL * np.maximum(np.abs(left), np.abs(right)) + atol
        if bad.any():
            r = int(np.argmax(bad))
            beyond = "" if declared is None else \
                f" (beyond the mixing-rule defect of {declared:g} kg/mol the model declares)"
            report(label, f"cross-differentials differ: nu d ln gamma±({j.name})/d m"
                          f"({k.name}) = {left[r]:.8g}, nu d ln gamma±({k.name})/d m"
                          f"({j.name}) = {right[r]:.8g} at I = {comp.ionic_strength[r]:.4g}"
                          f"{beyond}")


def _gibbs_duhem(model, comp, amounts, values, dh, mean_values, label, report) -> None:
    u, _ = unit_nodes()
    phi = np.asarray(model.compute(_request(comp, values, dh, (OSMOTIC,)))
                     .values[OSMOTIC])[0]
    total = comp.molality.sum(axis=1)
    at = mean_values(comp)
    path = comp.with_molality((comp.molality[:, None, :] * (u**2)[None, :, None])
                              .reshape(-1, len(comp.ions)))
    along = mean_values(path)
    gd = np.ones(comp.n)
    for s in comp.salts:
        m_s = amounts[s.name]
        integral = (along[s.name].reshape(comp.n, u.size) * dilution_weights()[None, :]).sum(axis=1)
        gd += s.nu * m_s * (at[s.name] - integral) / total
    dev = np.abs(phi - gd)
    if dev.max() > GIBBS_DUHEM_TOLERANCE:
        r = int(np.argmax(dev))
        report(label, f"osmotic coefficient breaks Gibbs-Duhem along dilution: analytic "
                      f"{phi[r]:.12g}, from the means {gd[r]:.12g} at I = "
                      f"{comp.ionic_strength[r]:.4g}")
