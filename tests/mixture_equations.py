"""Published mixture equations written out here, independently of the plugins, to make synthetic
mixture data for the tests of mixture fitting (tests/test_fit_mixture.py).

Both are for HCl + NaCl, two 1-1 salts with a common anion, where no unsymmetrical term enters.
Molalities in mol/kg; natural logs unless said otherwise.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

LN10 = math.log(10.0)


def sit_log10_gamma_pm_hcl(m_h: np.ndarray, m_na: np.ndarray, eps_hcl: float, eps_nacl: float,
                           a: float = 0.509) -> np.ndarray:
    """log10 gamma±(HCl) in HCl + NaCl by the SIT equation (Grenthe et al., Chemical
    Thermodynamics of Uranium, 1992, appendix B, eq. B.4, from memory):
    log10 gamma_i = -z_i^2 D + sum_k eps(i, k) m_k, D = A sqrt(I) / (1 + 1.5 sqrt(I)), with
    A = 0.509 kg^1/2 mol^-1/2 at 25 °C (the value of that appendix, from memory).
    """
    m_cl = m_h + m_na
    i = m_cl  # I = (m_H + m_Na + m_Cl) / 2 for 1-1 salts
    d = a * np.sqrt(i) / (1.0 + 1.5 * np.sqrt(i))
    log_h = -d + eps_hcl * m_cl
    log_cl = -d + eps_hcl * m_h + eps_nacl * m_na
    return 0.5 * (log_h + log_cl)


@dataclass(frozen=True)
class PitzerPair:
    """Pitzer's binary parameters of a 1-1 pair (alpha = 2, Pitzer and Mayorga 1973)."""

    beta0: float
    beta1: float
    c_phi: float


def _g(x: np.ndarray) -> np.ndarray:
    return 2.0 * (1.0 - (1.0 + x) * np.exp(-x)) / x**2


def _g_prime(x: np.ndarray) -> np.ndarray:
    return -2.0 * (1.0 - (1.0 + x + 0.5 * x**2) * np.exp(-x)) / x**2


def pitzer_hcl_nacl(m_h: np.ndarray, m_na: np.ndarray, hcl: PitzerPair, nacl: PitzerPair,
                    theta: float, psi: float, a_phi: float = 0.392, b: float = 1.2
                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(ln gamma±(HCl), ln gamma±(NaCl), phi) in HCl + NaCl by Pitzer's mixture equations in the
    form of Harvie, Møller and Weare (Geochim. Cosmochim. Acta 48, 723 (1984), eqs. 1-10, from
    memory; also Pitzer, Activity Coefficients in Electrolyte Solutions, 2nd ed., 1991, ch. 3).
    H+ and Na+ have the same charge, so Phi = theta, Phi' = 0 and Phi^phi = theta (no ^E theta).
    b = 1.2 and alpha = 2 (kg/mol)^1/2; A_phi = 0.392 as the authors used at 25 °C.
    """
    m_cl = m_h + m_na
    i = m_cl
    s = np.sqrt(i)
    z = m_h + m_na + m_cl  # Z = sum m_i |z_i|
    x = 2.0 * s
    pairs = ((m_h, hcl), (m_na, nacl))
    b_mx = {id(p): p.beta0 + p.beta1 * _g(x) for _, p in pairs}
    b_prime = {id(p): p.beta1 * _g_prime(x) / i for _, p in pairs}
    b_phi = {id(p): p.beta0 + p.beta1 * np.exp(-x) for _, p in pairs}
    c = {id(p): p.c_phi / 2.0 for _, p in pairs}  # C = C^phi / (2 sqrt|z_M z_X|)
    f = -a_phi * (s / (1.0 + b * s) + (2.0 / b) * np.log1p(b * s))
    f = f + sum(mc * m_cl * b_prime[id(p)] for mc, p in pairs)
    sum_c = sum(mc * m_cl * c[id(p)] for mc, p in pairs)  # sum_c sum_a m_c m_a C_ca
    ln_h = f + m_cl * (2.0 * b_mx[id(hcl)] + z * c[id(hcl)]) + m_na * (2.0 * theta + m_cl * psi) \
        + sum_c
    ln_na = f + m_cl * (2.0 * b_mx[id(nacl)] + z * c[id(nacl)]) + m_h * (2.0 * theta + m_cl * psi) \
        + sum_c
    ln_cl = f + sum(mc * (2.0 * b_mx[id(p)] + z * c[id(p)]) for mc, p in pairs) \
        + m_h * m_na * psi + sum_c
    total = m_h + m_na + m_cl
    excess = (-a_phi * i**1.5 / (1.0 + b * s)
              + sum(mc * m_cl * (b_phi[id(p)] + z * c[id(p)]) for mc, p in pairs)
              + m_h * m_na * (theta + m_cl * psi))
    phi = 1.0 + 2.0 * excess / total
    return 0.5 * (ln_h + ln_cl), 0.5 * (ln_na + ln_cl), phi
