"""Which Debye-Hückel constant, at which temperature, a parameter set is evaluated with.

One decision, in one place, for ``predict``, ``compare``, ``fit`` and the report:

* A published set carries the A_phi its authors fitted with (Pitzer and Mayorga used 0.392).
  With ``constant="published"`` (the default) the set is evaluated with that constant, but only
  at the set's own temperature: the constant belongs to the authors' fit at that temperature,
  and elsewhere the current constant of water at the temperature asked is used.
* ``constant="current"``: the constant of water at the temperature asked (IAPWS), always.
* A number: that A_phi, as a refit that wants to match a publication may need.

Away from the set's temperature its parameters are used unchanged; the basis says so, and every
number evaluated on it is an extrapolation in temperature.

A set with a temperature form (``saltbench.models.temperature``) gives its parameters at any
temperature; it is an extrapolation only outside the range its authors fitted the form over
(``set_temperature_range_k``). Its published A_phi, if any, still belongs to its own temperature.
"""

from __future__ import annotations

from dataclasses import dataclass

from saltbench.water.debye_huckel import DebyeHuckel, debye_huckel_constants, with_a_phi

#: Temperatures closer than this are the same temperature (K).
SAME_TEMPERATURE_K = 0.01


@dataclass(frozen=True)
class EvaluationBasis:
    dh: DebyeHuckel
    constant: str                       # how the A_phi was chosen, in words
    off_temperature: bool               # the set's values are used at another temperature
    set_temperature_k: float | None
    #: the range of a set's temperature form (then ``off_temperature`` means outside it)
    set_temperature_range_k: tuple[float, float] | None = None


def parse_constant(text: str) -> str | float:
    """``published``, ``current`` or a positive number (A_phi in (kg/mol)^1/2)."""
    t = text.strip().lower()
    if t in ("published", "current"):
        return t
    try:
        value = float(t)
    except ValueError:
        raise ValueError(f"expected 'published', 'current' or an A_phi value, found {text!r}") from None
    if not 0.1 < value < 2.0:
        raise ValueError(f"A_phi {value:g} is not plausible for water ((kg/mol)^1/2; 0.392 at 25 °C)")
    return value


def evaluation_basis(temperature_k: float, *, set_id: str | None = None, set_a_phi: float | None = None,
                     set_temperature_k: float | None = None, constant: str | float = "published",
                     pressure_pa: float | None = None,
                     set_temperature_range_k: tuple[float, float] | None = None) -> EvaluationBasis:
    dh = debye_huckel_constants(temperature_k, pressure_pa)
    at_own = set_temperature_k is not None and abs(temperature_k - set_temperature_k) < SAME_TEMPERATURE_K
    if set_temperature_range_k is not None:
        low, high = set_temperature_range_k
        off = not (low - SAME_TEMPERATURE_K <= temperature_k <= high + SAME_TEMPERATURE_K)
    else:
        off = set_temperature_k is not None and not at_own
    rng = set_temperature_range_k
    if isinstance(constant, float):
        return EvaluationBasis(with_a_phi(dh, constant, f"A_phi = {constant:g} as asked"),
                               f"A_phi = {constant:g} (as asked)", off, set_temperature_k, rng)
    if constant == "published" and set_a_phi is not None and (at_own or set_temperature_k is None and not off):
        return EvaluationBasis(with_a_phi(dh, set_a_phi, f"A_phi = {set_a_phi} of parameter set {set_id}"),
                               f"A_phi = {set_a_phi:g}, the one set {set_id} was fitted with", off,
                               set_temperature_k, rng)
    why = (" (the published constant belongs to the set's own temperature)"
           if constant == "published" and set_a_phi is not None else "")
    return EvaluationBasis(dh, f"A_phi = {dh.a_phi:.4f} of water at {temperature_k:g} K{why}", off,
                           set_temperature_k, rng)
