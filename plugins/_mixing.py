"""The frame of a model published for one salt that also has a published mixture rule.

A model here keeps its one-salt formulas (:class:`~saltbench.models.contract.ActivityModel`):
a solution of one salt goes through them exactly as before, so fits, comparisons and their
speed are those of the one-salt form. A solution of several salts (or of ions given directly)
goes to :meth:`MixtureRuleModel.compute_mixture`, which gives every ion's ln gamma on the
model's own single-ion form, as an array (S, N, K), and the osmotic coefficient; the mean of
a neutral salt is then ln gamma± = (nu+ ln gamma+ + nu- ln gamma-) / nu and
ln a_w = -M_w phi sum_i m_i (IUPAC Green Book, 3rd ed., 2007, 2.13).

Where a rule gives single-ion values but no osmotic coefficient, or one that is not exactly
its Gibbs-Duhem partner, the models here take phi from the dilution path of the mixture
(every molality scaled by u^2, 0 <= u <= 1):

    phi - 1 = sum_i m_i [ln gamma_i(m) - int_0^1 ln gamma_i(m u^2) 2u du] / sum_i m_i,

which is the Gibbs-Duhem equation integrated at fixed composition fractions (Robinson and
Stokes, Electrolyte Solutions, 2nd ed., 1959, ch. 2, for one salt; for a mixture it holds along
that path whatever the rule). For one salt it is the one-salt Gibbs-Duhem relation, so every
phi here reduces to the one-salt phi. Where a rule is not the derivative of one excess Gibbs
energy, phi from another path would differ; the cross-differential defect measures by how much
the rule falls short (:func:`saltbench.models.solution_kit.cross_differential_defect`).
"""

from __future__ import annotations

import numpy as np

from saltbench.chemistry.solution import Composition
from saltbench.models.assemble import assemble
from saltbench.models.contract import ActivityModel, Computed, ParameterKey, Request

#: What a mixture rule's compute_mixture returns: ln gamma (S, N, K) and its derivatives by
#: key, phi (S, N) and its derivatives by key (phi None when the rule gives none).
IonTerms = tuple[np.ndarray, dict[ParameterKey, np.ndarray], np.ndarray | None,
                 dict[ParameterKey, np.ndarray]]


class MixtureRuleModel(ActivityModel):
    """A one-salt model with a mixture rule: one salt by its own formulas, else the rule."""

    mixtures = True
    #: The quantity kinds :meth:`compute` returns for a solution of several salts.
    mixture_computes: frozenset[str] = frozenset()

    def computes_for(self, composition: Composition) -> frozenset[str]:
        if composition.single_salt is not None:
            return self.computes
        return self.mixture_computes

    def compute(self, request: Request) -> Computed:
        if request.composition.single_salt is not None:
            return super().compute(request)
        return assemble(request, *self.ion_terms(request))

    def ion_terms(self, request: Request) -> IonTerms:
        """ln gamma of every ion (S, N, K), phi (S, N), and their derivatives for request.wrt."""
        raise NotImplementedError


def ions_by_sign(comp: Composition) -> tuple[list[int], list[int]]:
    """Column indices of the cations and of the anions."""
    z = comp.charges
    return [k for k in range(z.size) if z[k] > 0], [k for k in range(z.size) if z[k] < 0]


