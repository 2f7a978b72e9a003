"""Temperature forms: a parameter as a function of temperature with named coefficients.

A form is a short list of basis functions f_j(T); the parameter is p(T) = sum_j c_j f_j(T) with
named coefficients c_j, so coefficients enter linearly and a parameter that enters a model
linearly keeps its coefficients exactly solvable. Models never see forms: the harness evaluates
p at each solution's temperature before calling ``compute`` and turns derivatives with respect to
p into derivatives with respect to each coefficient by the chain rule,
d q / d c_j = (d q / d p) f_j(T).

Forms here:
- ``constant``: p = c0.
- ``linear``: p = c0 + c1 (T - T_r): a value and its first temperature derivative at T_r, the
  form of published first derivatives (e.g. Silvester and Pitzer 1977 for 1-1 salts) and the
  most a few temperatures over a few tens of kelvin can determine.
- ``reference-expansion``: p = c0 + c1 (T - T_r) + c2 (1/T - 1/T_r) + c3 ln(T/T_r), with
  T_r = 298.15 K, an expansion about a reference temperature of the kind used to fit the
  temperature dependence of interaction parameters (see e.g. Pitzer, Activity Coefficients in
  Electrolyte Solutions, 2nd ed., CRC Press, 1991, ch. 3; the exact basis from memory of that
  chapter; common practice, no source for this choice of four terms). At T = T_r it is c0.
"""

from __future__ import annotations

from collections.abc import Callable, Hashable, Mapping, Sequence
from dataclasses import dataclass
from typing import TypeVar

import numpy as np

REFERENCE_K = 298.15
K = TypeVar("K", bound=Hashable)  # a parameter key


@dataclass(frozen=True)
class TemperatureForm:
    """p(T) = sum_j c_j f_j(T) for the named coefficients ``coefficients``."""

    id: str
    coefficients: tuple[str, ...]
    basis_functions: tuple[Callable[[np.ndarray, float], np.ndarray], ...]
    reference_k: float = REFERENCE_K
    description: str = ""

    def basis(self, temperature_k: np.ndarray | float) -> np.ndarray:
        """f_j(T) for each temperature: (N, J)."""
        t = np.atleast_1d(np.asarray(temperature_k, dtype=float))
        return np.column_stack([np.broadcast_to(f(t, self.reference_k), t.shape)
                                for f in self.basis_functions])

    def value(self, coefficients: Mapping[str, float] | Sequence[float] | np.ndarray,
              temperature_k: np.ndarray | float) -> np.ndarray:
        """p at each temperature (N,); ``coefficients`` by name, or (J,) or (S, J) for S sets
        (then the result is (S, N))."""
        if isinstance(coefficients, Mapping):
            missing = [c for c in self.coefficients if c not in coefficients]
            if missing:
                raise KeyError(f"temperature form {self.id}: no value for {', '.join(missing)}")
            c = np.array([float(coefficients[k]) for k in self.coefficients])
        else:
            c = np.asarray(coefficients, dtype=float)
        return c @ self.basis(temperature_k).T


def _one(t: np.ndarray, tr: float) -> np.ndarray:
    return np.ones_like(t)


CONSTANT = TemperatureForm("constant", ("c0",), (_one,), description="p = c0")
REFERENCE_EXPANSION = TemperatureForm(
    "reference-expansion", ("c0", "c1", "c2", "c3"),
    (_one, lambda t, tr: t - tr, lambda t, tr: 1.0 / t - 1.0 / tr, lambda t, tr: np.log(t / tr)),
    description="p = c0 + c1 (T - Tr) + c2 (1/T - 1/Tr) + c3 ln(T/Tr), Tr = 298.15 K")

LINEAR = TemperatureForm("linear", ("c0", "c1"), (_one, lambda t, tr: t - tr),
                         description="p = c0 + c1 (T - Tr), Tr = 298.15 K")

FORMS = {f.id: f for f in (CONSTANT, LINEAR, REFERENCE_EXPANSION)}


def resolve(forms: Mapping[K, TemperatureForm], coefficients: Mapping[K, np.ndarray],
            temperature_k: np.ndarray) -> dict[K, np.ndarray]:
    """Each parameter's values at each row's temperature, as a request takes them: (S, N) from
    its form and its coefficients (S, J) for S parameter sets."""
    t = np.atleast_1d(np.asarray(temperature_k, dtype=float))
    return {key: np.atleast_2d(forms[key].value(np.atleast_2d(c), t))
            for key, c in coefficients.items()}


def chain(forms: Mapping[K, TemperatureForm], derivatives: Mapping[K, np.ndarray],
          temperature_k: np.ndarray) -> dict[tuple[K, str], np.ndarray]:
    """Derivatives with respect to each coefficient, d q / d c_j = (d q / d p) f_j(T), keyed
    (parameter key, coefficient name), from a model's d q / d p (S, N)."""
    t = np.atleast_1d(np.asarray(temperature_k, dtype=float))
    out = {}
    for key, d in derivatives.items():
        f = forms[key]
        basis = f.basis(t)  # (N, J)
        for j, name in enumerate(f.coefficients):
            out[(key, name)] = np.asarray(d) * basis[:, j]
    return out


def form(name: str) -> TemperatureForm:
    try:
        return FORMS[name]
    except KeyError:
        raise KeyError(f"unknown temperature form {name!r} (known: {', '.join(FORMS)})") from None


def coefficient_problem(form_name: str, coefficients: Sequence[str]) -> str | None:
    """Why a parameter file's temperature form or one of its coefficient names is wrong (None:
    nothing). ``coefficients`` are the further coefficients named by the file's columns (the
    plain column gives the first)."""
    known = FORMS.get(form_name)
    if known is None:
        return f"unknown temperature form {form_name!r} (known: {', '.join(FORMS)})"
    for name in coefficients:
        if name not in known.coefficients[1:]:
            return (f"form {known.id} has no coefficient {name!r} (its further coefficients: "
                    f"{', '.join(known.coefficients[1:]) or 'none'})")
    return None


def values_at(form_name: str | None, values: Mapping[str, float],
              coefficients: Mapping[str, Mapping[str, float]],
              temperature_k: float) -> dict[str, float]:
    """A parameter set's values at one temperature: each parameter with coefficients of the
    set's form evaluated there (the first coefficient is its value in ``values``, a coefficient
    not given is zero), the others as given. Without a form, ``values`` unchanged."""
    if form_name is None or not coefficients:
        return dict(values)
    f = form(form_name)
    forms = {name: f for name in coefficients if name in values}
    table = {name: np.array([[float(values[name]) if k == f.coefficients[0]
                              else float(coefficients[name].get(k, 0.0)) for k in f.coefficients]])
             for name in forms}
    resolved = resolve(forms, table, np.array([temperature_k]))
    return {**values, **{name: float(v[0, 0]) for name, v in resolved.items()}}


def row_values(form_name: str, value: float, coefficients: Mapping[str, float],
               temperature_k: np.ndarray) -> np.ndarray:
    """One parameter's value at each row's temperature (N,), from its first coefficient
    ``value`` and the further ``coefficients`` of form ``form_name``."""
    f = form(form_name)
    c = np.array([value if k == f.coefficients[0] else float(coefficients.get(k, 0.0))
                  for k in f.coefficients])
    return f.value(c, temperature_k)
