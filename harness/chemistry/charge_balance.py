"""Charge balance of an analysis: the imbalance as practitioners report it, and its acceptance.

The percent difference and the acceptance criteria are those of Standard Methods for the
Examination of Water and Wastewater, section 1030 E ("Checking analyses' correctness", the
anion-cation balance), from memory of Standard Methods 1030 E:

    % difference = 100 (sum cations - sum anions) / (sum cations + sum anions)   (equivalents)

    anion sum 0 - 3.0 meq/L     acceptable difference +/- 0.2 meq/L
    anion sum 3.0 - 10.0 meq/L  acceptable difference +/- 2 %
    anion sum 10 - 800 meq/L    acceptable difference +/- 5 %

Here the sums are in equivalents per kg of water (from molalities), which equal meq/L within the
solution's density for the dilute waters the criteria were written for; above 800 meq (brines,
seawater concentrates) the method states no criterion and we keep its 5 % (our choice, stated).
Sums are vectorised over solutions.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: (upper end of the anion sum in meq/kg, acceptable |difference|, "meq" or "%"); the last tier
#: extends past the method's 800 meq/L (see the module docstring).
ACCEPTANCE = ((3.0, 0.2, "meq"), (10.0, 2.0, "%"), (float("inf"), 5.0, "%"))
ACCEPTANCE_SOURCE = "Standard Methods for the Examination of Water and Wastewater, 1030 E (from memory)"


@dataclass(frozen=True)
class ChargeBalance:
    """Equivalent sums (N,) in eq/kg of water, the percent difference, and whether it passes."""

    cations_eq: np.ndarray
    anions_eq: np.ndarray

    @property
    def difference_eq(self) -> np.ndarray:
        return self.cations_eq - self.anions_eq

    @property
    def percent(self) -> np.ndarray:
        """100 (sum cation eq - sum anion eq) / (sum cation eq + sum anion eq)."""
        total = self.cations_eq + self.anions_eq
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(total > 0, 100.0 * self.difference_eq / np.where(total > 0, total, 1.0), 0.0)

    @property
    def limit(self) -> tuple[np.ndarray, np.ndarray]:
        """The acceptable difference for each solution: (value, is_percent)."""
        anions_meq = 1000.0 * self.anions_eq
        value = np.empty_like(anions_meq)
        is_percent = np.empty(anions_meq.shape, dtype=bool)
        lower = -np.inf
        for upper, allowed, kind in ACCEPTANCE:
            here = (anions_meq > lower) & (anions_meq <= upper)
            value[here] = allowed
            is_percent[here] = kind == "%"
            lower = upper
        return value, is_percent

    @property
    def acceptable(self) -> np.ndarray:
        """Whether each solution's imbalance is within the Standard Methods 1030 E criterion."""
        value, is_percent = self.limit
        diff_meq = np.abs(1000.0 * self.difference_eq)
        return np.where(is_percent, np.abs(self.percent) <= value, diff_meq <= value)


def charge_balance(molality: np.ndarray, charges: np.ndarray) -> ChargeBalance:
    """Charge balance of solutions of ions with ``charges`` (K,) at ``molality`` (N, K) mol/kg."""
    m = np.atleast_2d(np.asarray(molality, dtype=float))
    z = np.asarray(charges, dtype=float)
    return ChargeBalance(m @ np.where(z > 0, z, 0.0), m @ np.where(z < 0, -z, 0.0))
