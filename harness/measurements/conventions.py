"""Single-ion activity coefficients in solutions of one or more salts, under stated conventions.

Only mean quantities of electroneutral combinations are measurable; every single-ion value here
rests on a non-thermodynamic convention (Guggenheim, J. Phys. Chem. 33, 842 (1929)), and each
result says so. Decadic forms, A = A_gamma / ln 10 and B (Å^-1 (kg/mol)^1/2) from
:func:`saltbench.water.debye_huckel_constants`; I = 1/2 sum m_i z_i^2 in mol/kg.

- MacInnes convention (MacInnes, J. Am. Chem. Soc. 41, 1086 (1919)):
  gamma(K+) = gamma(Cl-) = gamma±(KCl) at the same ionic strength; other ions follow from their
  salts' mean values, gamma±^nu = gamma+^nu+ gamma-^nu-.
- Bates-Guggenheim convention for pH standards (Bates and Guggenheim, Pure Appl. Chem. 1, 163
  (1960); Buck et al., Pure Appl. Chem. 74, 2169 (2002), eq. 14):
  log10 gamma(Cl-) = -A sqrt(I) / (1 + 1.5 sqrt(I)),  for I <= 0.1 mol/kg only.
- A solution model's own single-ion form (:func:`model_single_ion`): the built-in models that
  give one for mixtures are the Debye-Hückel limiting law (Debye and Hückel, Phys. Z. 24, 185
  (1923)), Davies (Ion Association, Butterworths, 1962) and SIT (Guggenheim and Turgeon,
  Trans. Faraday Soc. 51, 747 (1955); Ciavatta, Ann. Chim. (Rome) 70, 551 (1980)); their formulas
  are written once, in the plugins (``saltbench.plugins._ionic``).
- Extended Debye-Hückel with ion size a_i (same source):
  log10 gamma_i = -A z_i^2 sqrt(I) / (1 + B a_i sqrt(I)).
- Truesdell-Jones (Truesdell and Jones, J. Res. U.S. Geol. Surv. 2, 233 (1974), eq. 2):
  log10 gamma_i = -A z_i^2 sqrt(I) / (1 + B a_i sqrt(I)) + b_i I.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.ions import Ion
from saltbench.chemistry.solution import Composition
from saltbench.errors import UserError
from saltbench.models.contract import Conditions, ParameterKey, Request, SolutionModel
from saltbench.models.dh_terms import size_term
from saltbench.models.quantities import ln_gamma
from saltbench.water.debye_huckel import DebyeHuckel, debye_huckel_constants

SINGLE_ION_CAVEAT = (
    "Single-ion activity coefficients depend on a non-thermodynamic convention; only mean "
    "quantities of electroneutral combinations (gamma± of a salt) are measurable."
)
PH_CAUTION = (
    "pH values assigned through the Bates-Guggenheim convention are conventional; for regulated pH "
    "measurement follow the applicable standard (IUPAC 2002 recommendations), local codes and "
    "accredited laboratory practice."
)
BATES_GUGGENHEIM_MAX_I = 0.1  # mol/kg, the limit stated with the convention
#: Ionic strength (mol/kg) up to which each convention's form is commonly held to work, the
#: same figures the corresponding model plugins declare as their authors' range (common
#: practice, no source for the exact cut-offs): beyond it a value is an extrapolation and is
#: marked so. MacInnes has none of its own: it holds as far as the KCl values it rests on.
CONVENTION_MAX_I = {"debye-huckel": 0.001, "extended-debye-huckel": 0.1, "davies": 0.5,
                    "truesdell-jones": 2.0, "sit": 3.5, "bates-guggenheim": BATES_GUGGENHEIM_MAX_I}

#: A solution as salts with their molalities in mol/kg (numbers or arrays of one shape); the
#: model contract's :class:`saltbench.chemistry.solution.Composition` is built from it.
SaltAmounts = Sequence[tuple[Electrolyte, float | np.ndarray]]


@dataclass(frozen=True)
class SingleIonResult:
    """log10 gamma_i of each ion under one convention, with the caveat that it is conventional."""

    convention: str
    ionic_strength: np.ndarray
    temperature_k: float
    ions: dict[str, Ion]
    molalities: dict[str, np.ndarray]
    log10_gamma: dict[str, np.ndarray]
    parameters: dict[str, object] = field(default_factory=dict)
    caveat: str = SINGLE_ION_CAVEAT
    cautions: tuple[str, ...] = ()

    def gamma(self, ion: str) -> np.ndarray:
        return 10.0 ** self._get(ion)

    def ln_gamma(self, ion: str) -> np.ndarray:
        return self._get(ion) * math.log(10.0)

    def activity(self, ion: str) -> np.ndarray:
        if ion not in self.molalities:
            raise UserError(f"ion {ion} is not in the solution")
        return self.molalities[ion] * self.gamma(ion)

    def _get(self, ion: str) -> np.ndarray:
        if ion not in self.log10_gamma:
            known = ", ".join(self.log10_gamma) or "none"
            raise UserError(f"no single-ion value for {ion} under the {self.convention} "
                            f"convention (available: {known})")
        return self.log10_gamma[ion]


def _solution(composition: SaltAmounts,
              temperature_k: float = 298.15) -> tuple[Composition, tuple[int, ...]]:
    """The salts as the contract's :class:`Composition` (which checks them), and the shape of the
    caller's molalities, in which every result is given back."""
    shape = np.broadcast_shapes(*(np.shape(m) for _, m in composition)) if composition else ()
    return Composition.of_salts(list(composition), temperature_k), shape


def _ions(solution: Composition, shape: tuple[int, ...]
          ) -> tuple[dict[str, Ion], dict[str, np.ndarray]]:
    return ({ion.name: ion for ion in solution.ions},
            {n: solution.of(n).reshape(shape) for n in solution.names})


def ion_molalities(composition: SaltAmounts) -> tuple[dict[str, Ion], dict[str, np.ndarray]]:
    """The ions of a solution of salts and their molalities (mol/kg), summed over the salts."""
    return _ions(*_solution(composition))


def ionic_strength(composition: SaltAmounts) -> np.ndarray:
    """I = 1/2 sum_i m_i z_i^2 in mol/kg."""
    solution, shape = _solution(composition)
    return solution.ionic_strength.reshape(shape)


def _setup(composition: SaltAmounts, temperature_k: float, dh: DebyeHuckel | None):
    """The solution, its ions and their molalities, I and the Debye-Hückel constants."""
    dh = dh or debye_huckel_constants(temperature_k)
    solution, shape = _solution(composition, dh.temperature_k)
    ions, mol = _ions(solution, shape)
    return ions, mol, solution.ionic_strength.reshape(shape), dh, solution


def _need(mapping: Mapping[str, float], ions: Mapping[str, Ion], what: str) -> dict[str, float]:
    missing = [n for n in ions if n not in mapping]
    if missing:
        raise UserError(f"missing {what} for {', '.join(missing)}")
    return {n: float(mapping[n]) for n in ions}


def extended_debye_huckel(composition: SaltAmounts, ion_sizes: Mapping[str, float],
                          temperature_k: float = 298.15, *,
                          dh: DebyeHuckel | None = None) -> SingleIonResult:
    """``ion_sizes`` in Å keyed by ion name (``"Na+"``, ``"SO4-2"``)."""
    ions, mol, i, dh, _ = _setup(composition, temperature_k, dh)
    a = _need(ion_sizes, ions, "ion sizes (Å)")
    logs = _size_terms(ions, a, i, dh)
    return SingleIonResult("extended Debye-Hückel", i, dh.temperature_k, ions, mol, logs,
                           {"ion_sizes_angstrom": a})


def _size_terms(ions: Mapping[str, Ion], sizes: Mapping[str, float], i: np.ndarray,
                dh: DebyeHuckel) -> dict[str, np.ndarray]:
    """log10 of the Debye-Hückel ion-size term of each ion (saltbench.models.dh_terms)."""
    s = np.sqrt(i)
    return {n: size_term(dh.a_gamma_log10, ion.charge**2, s, dh.b_gamma_per_angstrom * sizes[n] * s)
            for n, ion in ions.items()}


def truesdell_jones(composition: SaltAmounts, ion_sizes: Mapping[str, float],
                    b_ion: Mapping[str, float], temperature_k: float = 298.15, *,
                    dh: DebyeHuckel | None = None) -> SingleIonResult:
    """``ion_sizes`` in Å and ``b_ion`` in kg/mol, both keyed by ion name."""
    ions, mol, i, dh, _ = _setup(composition, temperature_k, dh)
    a = _need(ion_sizes, ions, "ion sizes (Å)")
    bi = _need(b_ion, ions, "Truesdell-Jones b values (kg/mol)")
    logs = {n: v + bi[n] * i for n, v in _size_terms(ions, a, i, dh).items()}
    return SingleIonResult("Truesdell-Jones", i, dh.temperature_k, ions, mol, logs,
                           {"ion_sizes_angstrom": a, "b": bi})


def model_single_ion(composition: SaltAmounts, model: SolutionModel, label: str,
                     params: Mapping[ParameterKey, float] | None = None,
                     temperature_k: float = 298.15, *,
                     dh: DebyeHuckel | None = None) -> SingleIonResult:
    """Single-ion values of a solution under a model's own single-ion form (the Debye-Hückel
    limiting law, Davies, SIT...): ``model`` is any solution model that computes ``ln_gamma``
    of ions for mixtures; ``params`` gives its keyed parameters (others at their defaults)."""
    ions, mol, i, dh, solution = _setup(composition, temperature_k, dh)
    if not model.supports_composition(solution) or "ln_gamma" not in model.computes_for(solution):
        raise UserError(f"model {model.id} gives no single-ion values for this solution")
    keys = model.keys_for(solution)
    given = dict(params or {})
    values = {k: np.full((1, 1), float(given.get(k, p.default))) for k, p in keys.items()}
    wanted = tuple(ln_gamma(n) for n in solution.names)
    out = model.compute(Request(solution, wanted, values,
                                Conditions.single(dh, solution.n)))
    shape = np.shape(i)
    logs = {q.of: np.asarray(out.values[q])[0].reshape(shape) / math.log(10.0) for q in wanted}
    return SingleIonResult(label, i, dh.temperature_k, ions, mol, logs,
                           {str(k): float(v[0, 0]) for k, v in values.items()})


def bates_guggenheim(composition: SaltAmounts, temperature_k: float = 298.15, *,
                     dh: DebyeHuckel | None = None) -> SingleIonResult:
    """gamma(Cl-) at the ionic strength of a pH standard; refused above I = 0.1 mol/kg."""
    ions, mol, i, dh, _ = _setup(composition, temperature_k, dh)
    if np.any(i > BATES_GUGGENHEIM_MAX_I * (1 + 1e-9)):
        raise UserError(
            f"the Bates-Guggenheim convention is defined only up to I = {BATES_GUGGENHEIM_MAX_I:g} "
            f"mol/kg; this solution has I = {float(np.max(i)):.4g} mol/kg")
    s = np.sqrt(i)
    log_cl = -dh.a_gamma_log10 * s / (1.0 + 1.5 * s)
    cl = ions.get("Cl-")
    out_ions = {"Cl-": cl} if cl else {}
    return SingleIonResult("Bates-Guggenheim", i, dh.temperature_k, out_ions,
                           {"Cl-": mol["Cl-"]} if cl else {}, {"Cl-": log_cl},
                           {"a_log10": dh.a_gamma_log10, "b_a": 1.5}, cautions=(PH_CAUTION,))


def _mean_at(value: object, i: np.ndarray) -> np.ndarray:
    g = np.asarray(value(i) if callable(value) else value, dtype=float)
    if np.any(g <= 0) or np.any(~np.isfinite(g)):
        raise UserError("mean activity coefficients must be positive")
    return g


def macinnes(composition: SaltAmounts, gamma_kcl: float | Callable[[np.ndarray], np.ndarray],
             temperature_k: float = 298.15, *,
             mean_gammas: Mapping[Electrolyte, float | Callable[[np.ndarray], np.ndarray]]
             | None = None) -> SingleIonResult:
    """MacInnes convention: gamma(K+) = gamma(Cl-) = gamma±(KCl) at the solution's I.

    ``gamma_kcl`` is gamma±(KCl) at that I, or a callable of I (mol/kg). ``mean_gammas`` gives
    gamma± at the same I of other salts that share K+ or Cl- (e.g. NaCl, K2SO4): their other ion
    is derived from gamma±^nu = gamma+^nu+ gamma-^nu-.
    """
    from saltbench.chemistry.ions import KNOWN_IONS

    ions, mol, i, _, _ = _setup(composition, temperature_k, None)
    log_k = np.log10(_mean_at(gamma_kcl, i))
    logs: dict[str, np.ndarray] = {"K+": log_k, "Cl-": log_k}
    all_ions = {"K+": KNOWN_IONS["K"], "Cl-": KNOWN_IONS["Cl"], **ions}
    for salt, value in (mean_gammas or {}).items():
        log_mean = np.log10(_mean_at(value, i))
        if salt.anion.name == "Cl-" and salt.cation.name != "K+":
            other = salt.cation
            logs[other.name] = (salt.nu * log_mean - salt.nu_anion * log_k) / salt.nu_cation
        elif salt.cation.name == "K+" and salt.anion.name != "Cl-":
            other = salt.anion
            logs[other.name] = (salt.nu * log_mean - salt.nu_cation * log_k) / salt.nu_anion
        else:
            raise UserError(f"{salt.name}: the MacInnes convention derives ions only from salts "
                            "of K+ or Cl- with one other ion")
        all_ions.setdefault(other.name, other)
    return SingleIonResult("MacInnes", i, float(temperature_k), {n: all_ions[n] for n in logs},
                           {n: mol[n] for n in logs if n in mol}, logs,
                           {"gamma_kcl": "callable" if callable(gamma_kcl) else float(gamma_kcl)})
