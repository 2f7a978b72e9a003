"""Pitzer's ion-interaction equations: a single salt M(nu+) X(nu-) in water, and mixtures.

Sources: K. S. Pitzer, J. Phys. Chem. 77, 268 (1973), eqs. 7, 17, 18 (f^phi, f^gamma) and
K. S. Pitzer and G. Mayorga, J. Phys. Chem. 77, 2300 (1973), eqs. 3-7 (B^phi, B^gamma, C);
K. S. Pitzer and G. Mayorga, J. Solution Chem. 3, 539 (1974), eqs. 2-3 (the beta2 term of 2-2
salts); collected in K. S. Pitzer, Activity Coefficients in Electrolyte Solutions, 2nd ed.,
CRC Press, 1991, ch. 3, eqs. 49-51. With I the ionic strength, s = sqrt(I), x_k = alpha_k s:

    phi - 1       = |z+ z-| f^phi + m (2 nu+ nu- / nu) B^phi + m^2 (2 (nu+ nu-)^1.5 / nu) C^phi
    ln gamma±     = |z+ z-| f^gamma + m (2 nu+ nu- / nu) B^gamma + m^2 (2 (nu+ nu-)^1.5 / nu) C^gamma

    f^phi   = -A_phi s / (1 + b s)
    f^gamma = -A_phi [ s / (1 + b s) + (2 / b) ln(1 + b s) ]
    B^phi   = beta0 + beta1 exp(-x_1) + beta2 exp(-x_2)
    B^gamma = 2 beta0 + 2 beta1 g(x_1) + 2 beta2 g(x_2)
    g(x)    = [1 - (1 + x - x^2/2) exp(-x)] / x^2           (so B^gamma = B + B^phi)
    C^gamma = (3/2) C^phi,   b = 1.2 (kg/mol)^1/2

A_phi is the Debye-Hückel osmotic slope of the evaluation context (``ctx.dh.a_phi``); the
published sets were fitted with A_phi = 0.392, which ``saltbench.water.with_a_phi`` restores.

alpha1 and alpha2 are fixed by default at Pitzer's values for the charge type: alpha1 = 2.0
(no beta2 term) for every type except 2-2, and alpha1 = 1.4, alpha2 = 12 for 2-2 salts
(Pitzer and Mayorga 1974). The declared default 0 stands for "the value for the charge type"
(alpha = 0 itself would make the beta1 term a constant, indistinguishable from beta0);
:meth:`Pitzer.defaults_for` gives the resolved numbers, e.g. as a fit's starting point.

Cost per evaluation: one sqrt, one log1p, and one exp per alpha in use (two at most), whatever
the number of molalities (see ``tests/test_model_pitzer.py``).

Mixtures: any other composition (several salts, or ions given without salts), and single-ion
values, are computed by Pitzer's mixture equations in the form of Harvie, Møller and Weare
(1984), with theta, psi and the unsymmetrical terms of Pitzer (1975): see
:mod:`saltbench.plugins._pitzer_mixture` and :mod:`saltbench.plugins._etheta`. For one salt
they give the equations above (to 1e-12, ``tests/test_model_pitzer_mixture.py``); the code above
stays the one-salt path, as fast as it was.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.solution import Composition
from saltbench.models import ActivityModel, EvalContext, Parameter, Validity, hookimpl
from saltbench.models.contract import Computed, Conditions, Request
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, Quantity, ln_gamma
from saltbench.plugins._pitzer_mixture import compute_mixture
from saltbench.water.properties import MOLAR_MASS_WATER, water_activity

B_PITZER = 1.2  # (kg/mol)^1/2, Pitzer (1973): one value for all salts
ALPHA1_DEFAULT = 2.0
ALPHA1_22 = 1.4
ALPHA2_22 = 12.0
# Below this x = alpha sqrt(I), g(x) and g'(x) come from their Taylor series: the closed forms
# lose digits to cancellation (1 - (1 + x - x^2/2) e^-x is of order x^2).
_SERIES_BELOW = 1e-2


def _g(x: np.ndarray, e: np.ndarray, small: bool) -> np.ndarray:
    """g(x) = [1 - (1 + x - x^2/2) e^-x] / x^2, with e = e^-x already computed.

    ``small`` says whether any x is below _SERIES_BELOW; without such x the closed form runs
    alone, on the whole array (the usual case: x > 0.01 above I ~ 2.5e-5 mol/kg).
    """
    if not small:
        x2 = x * x
        return (1.0 - (1.0 + x - 0.5 * x2) * e) / x2
    below = x < _SERIES_BELOW
    xs = np.where(below, 1.0, x)  # keeps the closed form finite where the series is used
    closed = (1.0 - (1.0 + xs - 0.5 * xs * xs) * e) / (xs * xs)
    # 1 - 5x/6 + 3x^2/8 - 7x^3/60 + x^4/36: Taylor series of the closed form
    series = 1.0 + x * (-5.0 / 6.0 + x * (0.375 + x * (-7.0 / 60.0 + x / 36.0)))
    return np.where(below, series, closed)


def _dg(x: np.ndarray, e: np.ndarray, small: bool) -> np.ndarray:
    """dg/dx, with e = e^-x already computed (``small`` as for :func:`_g`)."""
    if not small:
        num = 1.0 - (1.0 + x - 0.5 * x * x) * e
        return e * (2.0 - 0.5 * x) / x - 2.0 * num / x**3
    below = x < _SERIES_BELOW
    xs = np.where(below, 1.0, x)
    num = 1.0 - (1.0 + xs - 0.5 * xs * xs) * e
    closed = e * (2.0 - 0.5 * xs) / xs - 2.0 * num / xs**3
    series = -5.0 / 6.0 + x * (0.75 + x * (-0.35 + x / 9.0))
    return np.where(below, series, closed)


_ALL = frozenset(("beta0", "beta1", "beta2", "C_phi", "alpha1", "alpha2", "b"))
_MIXING_KINDS = ("like-pair", "triplet")
#: The convention of the single-ion values (see plugins/_pitzer_mixture.py).
SINGLE_ION_CONVENTION = ("the model's own single-ion form: z_i^2 F of Pitzer's mixture equations "
                         "(Harvie, Møller and Weare 1984; non-thermodynamic, only means are "
                         "measurable)")


class Pitzer(ActivityModel):
    id = "pitzer"
    name = "Pitzer"
    citation = (
        "K. S. Pitzer, J. Phys. Chem. 77, 268 (1973); K. S. Pitzer and G. Mayorga, J. Phys. "
        "Chem. 77, 2300 (1973) and J. Solution Chem. 3, 539 (1974); mixtures: K. S. Pitzer, "
        "J. Solution Chem. 4, 249 (1975); C. E. Harvie, N. Møller and J. H. Weare, Geochim. "
        "Cosmochim. Acta 48, 723 (1984)"
    )
    # The name stays that of the one-salt model: comparisons and reports of single salts print
    # it, and they must not change (tests/test_golden.py).
    mixtures = True
    computes = frozenset({"ln_gamma", "ln_gamma_pm", "osmotic", "water_activity"})  # type: ignore[assignment]
    single_ion_convention = SINGLE_ION_CONVENTION
    parameters = (
        Parameter("beta0", "β(0)", "kg/mol", 0.0, linear=True, belongs_to="pair",
                  description="short-range second virial coefficient, constant part"),
        Parameter("beta1", "β(1)", "kg/mol", 0.0, linear=True, belongs_to="pair",
                  description="second virial coefficient, part decaying as exp(-alpha1 sqrt(I))"),
        Parameter("beta2", "β(2)", "kg/mol", 0.0, linear=True, belongs_to="pair",
                  description="second virial coefficient, part decaying as exp(-alpha2 sqrt(I)); "
                              "used for 2-2 salts (ion association), 0 otherwise"),
        Parameter("C_phi", "Cφ", "kg²/mol²", 0.0, linear=True, belongs_to="pair",
                  description="third virial coefficient of the osmotic coefficient"),
        Parameter("alpha1", "α1", "(kg/mol)^1/2", 0.0, lower=0.0, upper=50.0, fixed=True, belongs_to="pair",
                  description="0 selects the charge-type value: 2.0, or 1.4 for 2-2 salts"),
        Parameter("alpha2", "α2", "(kg/mol)^1/2", 0.0, lower=0.0, upper=100.0, fixed=True, belongs_to="pair",
                  description="0 selects the charge-type value: 12 for 2-2 salts (and 12 "
                              "elsewhere, where beta2 is normally 0)"),
        Parameter("b", "b", "(kg/mol)^1/2", B_PITZER, lower=0.1, upper=10.0, fixed=True, belongs_to="model",
                  description="Debye-Hückel term constant, 1.2 for all salts"),
        Parameter("theta", "θ", "kg/mol", 0.0, linear=True, belongs_to="like-pair",
                  description="second virial coefficient of two ions of like sign (mixtures "
                              "only); the unsymmetrical terms Etheta are added for unlike charges"),
        Parameter("psi", "ψ", "kg²/mol²", 0.0, linear=True, belongs_to="triplet",
                  description="third virial coefficient of two ions of like sign with one of "
                              "the other sign (mixtures only)"),
    )
    validity = Validity(
        max_molality=6.0,
        temperature_k=(298.15, 298.15),
        note="Pitzer and Mayorga (1973): fits to about 6 mol/kg for 1-1 salts; each published "
             "set's m_max is the highest molality its authors fitted (lower for 2-1, 3-1, 2-2); "
             "parameters are for 25 °C",
    )
    description = ("Pitzer's virial-type equations: Debye-Hückel term with b = 1.2 plus second "
                   "(beta0, beta1, beta2) and third (C_phi) virial coefficients per cation-anion "
                   "pair; in mixtures also theta per pair of like-charged ions (with the "
                   "unsymmetrical terms Etheta of Pitzer 1975) and psi per triplet.")

    # -- charge-type defaults ---------------------------------------------------------------
    @staticmethod
    def alphas_for(electrolyte: Electrolyte, params: dict[str, float] | None = None
                   ) -> tuple[float, float]:
        """(alpha1, alpha2) in use: the given values, 0 meaning the charge-type default."""
        is_22 = electrolyte.charge_type == (2, 2)
        a1 = float((params or {}).get("alpha1", 0.0) or 0.0)
        a2 = float((params or {}).get("alpha2", 0.0) or 0.0)
        if a1 == 0.0:
            a1 = ALPHA1_22 if is_22 else ALPHA1_DEFAULT
        if a2 == 0.0:
            a2 = ALPHA2_22
        return a1, a2

    def defaults_for(self, electrolyte: Electrolyte) -> dict[str, float]:
        """Defaults with alpha1 and alpha2 resolved for ``electrolyte``'s charge type."""
        return self.defaults(electrolyte)

    def parameters_for(self, electrolyte: Electrolyte | None = None) -> tuple[Parameter, ...]:
        """Pitzer's choices per charge type: beta2 (with alpha2 = 12) only for 2-2 salts, where
        alpha1 = 1.4; alpha1 = 2 otherwise (Pitzer and Mayorga 1973, 1974)."""
        if electrolyte is None:
            return self.parameters
        # theta and psi have no value in a solution of one salt: its listing and fit skip them
        is_22 = electrolyte.charge_type == (2, 2)
        # The answer depends only on whether the salt is 2-2; a fit asks for it every time, so
        # it is kept per instance (checked against ``parameters`` in case that was replaced).
        cache = self.__dict__.setdefault("_parameters_for", {})
        hit = cache.get(is_22)
        if hit is not None and hit[0] is self.parameters:
            return hit[1]
        a1, a2 = self.alphas_for(electrolyte)
        out = []
        for p in self.parameters:
            if p.owner_kind in _MIXING_KINDS:
                continue
            if p.name == "alpha1":
                p = replace(p, default=a1)
            elif p.name == "alpha2":
                p = replace(p, default=a2)
            elif p.name == "beta2" and not is_22:
                p = replace(p, fixed=True)
            out.append(p)
        cache[is_22] = (self.parameters, tuple(out))
        return cache[is_22][1]

    # -- shared pieces ----------------------------------------------------------------------
    @staticmethod
    def _stoich(e: Electrolyte) -> tuple[float, float]:
        nu_prod = float(e.nu_cation * e.nu_anion)
        return 2.0 * nu_prod / e.nu, 2.0 * nu_prod**1.5 / e.nu

    def _evaluate(self, m, params, ctx: EvalContext, *, ln: bool, phi: bool,
                  wrt: frozenset[str] | None):
        """ln gamma± and phi (where asked) and the derivatives named in ``wrt`` (all for None;
        none for an empty set), each intermediate term computed once.

        Returns ``(ln_gamma, phi, d_ln, d_phi)`` with None for what was not asked. A virial term
        whose coefficients are all zero is left out rather than added as zeros (a fit evaluates
        the model with its linear parameters at zero); the sums are the same.
        """
        m = np.asarray(m, dtype=float)
        el = ctx.electrolyte
        wrt = _ALL if wrt is None else _ALL.intersection(wrt)
        b, beta0, beta1, beta2 = params["b"], params["beta0"], params["beta1"], params["beta2"]
        c_phi = params["C_phi"]
        a1, a2 = self.alphas_for(el, params)
        c_b, c_c = self._stoich(el)
        zz_a = el.zz * ctx.dh.a_phi
        s = np.sqrt(el.ionic_strength(m))
        mb, mm = m * c_b, m * m
        x1 = a1 * s
        e1 = np.exp(-x1)
        use_b1 = (ln or phi) and beta1 != 0.0
        use_b2 = (ln or phi) and beta2 != 0.0
        # beta2's exponential only where its term or one of its derivatives is in use
        need_e2 = use_b2 or "beta2" in wrt or "alpha2" in wrt
        if need_e2:
            x2 = a2 * s
            e2 = np.exp(-x2)
        # x is smallest where s is: one test of the smallest s picks the form of g and g'
        s_min = float(np.minimum.reduce(s, axis=None)) if s.size else 0.0
        small1 = a1 * s_min < _SERIES_BELOW
        small2 = a2 * s_min < _SERIES_BELOW
        if (ln and use_b1) or "beta1" in wrt:
            g1 = _g(x1, e1, small1)
        if (ln and use_b2) or "beta2" in wrt:
            g2 = _g(x2, e2, small2)
        bs = b * s
        one_bs = 1.0 + bs
        s_bs = s / one_bs
        if ln or "b" in wrt:
            log_bs = np.log1p(bs)
        ln_g = phi_v = None
        if ln:
            # |z+ z-| f^gamma = -|z+ z-| A_phi [s / (1 + b s) + (2 / b) ln(1 + b s)]
            ln_g = (-zz_a) * s_bs + (-zz_a * 2.0 / b) * log_bs
            if beta0 != 0.0 or use_b1 or use_b2:
                b_gamma = 2.0 * beta0 + 2.0 * beta1 * g1 if use_b1 else 2.0 * beta0
                if use_b2:
                    b_gamma = b_gamma + 2.0 * beta2 * g2
                ln_g = ln_g + mb * b_gamma
            if c_phi != 0.0:
                ln_g = ln_g + mm * (c_c * 1.5 * c_phi)
        if phi:
            phi_v = 1.0 + (-zz_a) * s_bs
            if beta0 != 0.0 or use_b1 or use_b2:
                b_phi = beta0 + beta1 * e1 if use_b1 else beta0
                if use_b2:
                    b_phi = b_phi + beta2 * e2
                phi_v = phi_v + mb * b_phi
            if c_phi != 0.0:
                phi_v = phi_v + mm * (c_c * c_phi)
        if not wrt:
            return ln_g, phi_v, {}, {}
        d_ln: dict[str, np.ndarray] = {}
        d_phi: dict[str, np.ndarray] = {}
        two_mb = 2.0 * mb
        if "beta0" in wrt:
            d_ln["beta0"], d_phi["beta0"] = two_mb, mb
        if "beta1" in wrt:
            d_ln["beta1"], d_phi["beta1"] = two_mb * g1, mb * e1
        if "beta2" in wrt:
            d_ln["beta2"], d_phi["beta2"] = two_mb * g2, mb * e2
        if "C_phi" in wrt:
            d_ln["C_phi"], d_phi["C_phi"] = (1.5 * c_c) * mm, c_c * mm
        if "alpha1" in wrt:
            d_ln["alpha1"] = (2.0 * beta1) * mb * _dg(x1, e1, small1) * s
            d_phi["alpha1"] = (-beta1) * mb * s * e1
        if "alpha2" in wrt:
            d_ln["alpha2"] = (2.0 * beta2) * mb * _dg(x2, e2, small2) * s
            d_phi["alpha2"] = (-beta2) * mb * s * e2
        if "b" in wrt:
            ss_bs2 = s * s_bs / one_bs  # s^2 / (1 + b s)^2
            d_ln["b"] = -zz_a * (-ss_bs2 - (2.0 / b**2) * log_bs + (2.0 / b) * s_bs)
            d_phi["b"] = zz_a * ss_bs2
        return ln_g, phi_v, d_ln, d_phi

    # -- the model functions ------------------------------------------------------------------
    def osmotic(self, m, params, ctx):
        return self._evaluate(m, params, ctx, ln=False, phi=True, wrt=frozenset())[1]

    def ln_gamma_pm(self, m, params, ctx):
        return self._evaluate(m, params, ctx, ln=True, phi=False, wrt=frozenset())[0]

    def jacobian(self, m, params, ctx):
        """Derivatives with respect to every parameter (those in ``ctx.wrt`` when it is given);
        the betas and C_phi enter linearly.

        The alpha derivatives are taken at the alphas in use (the charge-type values when the
        parameter is 0).
        """
        return self._evaluate(m, params, ctx, ln=False, phi=False, wrt=ctx.wrt)[2:]

    def values_and_jacobian(self, m, params, ctx):
        """ln gamma±, phi and the Jacobian in one pass over the shared terms."""
        return self._evaluate(m, params, ctx, ln=True, phi=True, wrt=ctx.wrt)

    # -- solutions of any composition ----------------------------------------------------------
    def default_alphas(self, z_cation: int, z_anion: int) -> tuple[float, float]:
        """(alpha1, alpha2) of a cation-anion pair whose parameters are 0 (as :meth:`alphas_for`)."""
        if (z_cation, z_anion) == (2, 2):
            return ALPHA1_22, ALPHA2_22
        return ALPHA1_DEFAULT, ALPHA2_22

    def ln_gamma_ions(self, m, params, ctx):
        """Single-ion values for one salt, by the mixture equations (``single_ion_convention``)."""
        e = ctx.electrolyte
        m = np.asarray(m, dtype=float)
        comp = Composition.of_salt(e, m, ctx.temperature_k, ctx.pressure_pa)
        keys = self.salt_keys(e)
        values = {k: np.array([[float(params.get(name, self.parameter(name).default))]])
                  for name, k in keys.items()}
        qc, qa = ln_gamma(e.cation.name), ln_gamma(e.anion.name)
        out = compute_mixture(Request(comp, (qc, qa), values, Conditions.single(ctx.dh, m.size)),
                              self.default_alphas)
        return {"cation": out.values[qc][0], "anion": out.values[qa][0]}

    def compute(self, request: Request) -> Computed:
        """One salt's ln gamma± and phi by the binary code above (its fast path, unchanged);
        everything else, and single ions, by the mixture equations (plugins/_pitzer_mixture.py),
        which reduce to the binary ones for one salt (tests/test_model_pitzer_mixture.py)."""
        wanted = request.quantities
        if request.composition.single_salt is None or any(q.kind == "ln_gamma" for q in wanted):
            return compute_mixture(request, self.default_alphas)
        if WATER_ACTIVITY not in wanted:
            return super().compute(request)
        binary: tuple[Quantity, ...] = tuple(q for q in wanted if q != WATER_ACTIVITY)
        out = super().compute(replace(request, quantities=tuple(dict.fromkeys(binary + (OSMOTIC,)))))
        total = request.composition.molality.sum(axis=1)
        a_w = water_activity(total, out.values[OSMOTIC])
        out.values[WATER_ACTIVITY] = a_w
        out.derivatives[WATER_ACTIVITY] = {
            k: -MOLAR_MASS_WATER * total * a_w * d
            for k, d in out.derivatives.get(OSMOTIC, {}).items()}
        if OSMOTIC not in wanted:
            out.values.pop(OSMOTIC)
            out.derivatives.pop(OSMOTIC, None)
        return out


@hookimpl
def register_models(context):
    return [Pitzer()]
