"""Flags: what went wrong with a fit, or what a reader should know about a result, as values.

A :class:`Flag` is a kind (:class:`FlagKind`) and the numbers and names that go with it. Code
decides on kinds (``flag.kind``, ``flag.blocks_ranking``), never on wording; the wording is made
here, in :func:`describe`, once for every writer (the ``fit`` and ``compare`` output, JSON and
CSV, the report and its manifest), since those must read the same.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from enum import StrEnum
from typing import Any

from saltbench.fitting.properties import REGISTRY


class FlagKind(StrEnum):
    # A fit that went wrong: such a flag keeps a model out of the recommendation.
    DID_NOT_CONVERGE = "did-not-converge"  # detail: the solver's message
    STEPS_REJECTED = "steps-rejected"  # detail: the model's last failure at a trial point
    MODEL_ERROR = "model-error"  # detail: the model's failure
    TOO_FEW_POINTS = "too-few-points"  # n_points, n_params
    SINGULAR = "singular"  # names: parameters the data carry no information on
    SINGULAR_COMBINATION = "singular-combination"  # names: parameters of the undetermined combination
    ILL_CONDITIONED = "ill-conditioned"  # condition_number
    AT_BOUND = "at-bound"  # name, side ("lower"/"upper"), bound
    # The minimum kept is lower than the one found from the usual start (a note: the kept one
    # is the better fit). chi2_first, chi2; first, start, found: nonlinear values by name.
    SEVERAL_MINIMA = "several-minima"
    # A validity scan's account of its range.
    TOO_FEW_TO_JUDGE = "too-few-to-judge"  # n_points, n_params
    TRIAL_FAILED = "trial-failed"  # limit (mol/kg), detail: why the fit at that limit failed
    DATA_END = "data-end"  # top: highest data molality
    SPARSE = "sparse"  # low, high: a stretch the data are too sparse to judge
    # One fold of a cross-validation (fold, folds: its number and how many).
    FOLD_TOO_FEW = "fold-too-few"  # n_points, n_params of the training points
    FOLD_UNSOLVED = "fold-unsolved"  # reason: the solver's last flag or message
    FOLD_NOT_CONVERGED = "fold-not-converged"  # detail: the solver's message
    FOLD_HELDOUT_ERROR = "fold-heldout-error"  # detail: the model's failure on held-out points
    # Notes of the comparison: they describe, they do not unrank.
    DETERMINATION_HELDOUT = "determination-heldout"  # worst, quantity ("ln_gamma"/"osmotic"), tolerance
    DETERMINATION_STDERR = "determination-stderr"  # name, value, stderr
    AUTHORS_TEMPERATURE = "authors-temperature"  # model_name, low, high (K), temperature (K)
    AUTHORS_MOLALITY = "authors-molality"  # model_name, claim, electrolyte, note, top
    PUBLISHED_TEMPERATURE = "published-temperature"  # set_id, set_temperature, temperature, constant
    PUBLISHED_TEMPERATURE_RANGE = "published-temperature-range"  # set_id, low, high, temperature (K)
    PUBLISHED_ANCHORING = "published-anchoring"  # set_id, dataset, offset, spread, low, high, phi_gap


#: Kinds that describe a result without making it unfit to rank.
NOTE_KINDS = frozenset({
    FlagKind.SEVERAL_MINIMA, FlagKind.DATA_END, FlagKind.SPARSE, FlagKind.DETERMINATION_HELDOUT,
    FlagKind.DETERMINATION_STDERR,
    FlagKind.AUTHORS_TEMPERATURE, FlagKind.AUTHORS_MOLALITY, FlagKind.PUBLISHED_TEMPERATURE,
    FlagKind.PUBLISHED_TEMPERATURE_RANGE, FlagKind.PUBLISHED_ANCHORING})
#: Kinds after which a fit has no usable solution (``FitResult.ok`` is false).
FAILED_FIT_KINDS = frozenset({
    FlagKind.MODEL_ERROR, FlagKind.SINGULAR, FlagKind.SINGULAR_COMBINATION, FlagKind.TOO_FEW_POINTS,
    FlagKind.DID_NOT_CONVERGE})
#: Notes on how well the data determine the parameters, and on a published set.
DETERMINATION_KINDS = frozenset({FlagKind.DETERMINATION_HELDOUT, FlagKind.DETERMINATION_STDERR})
PUBLISHED_KINDS = frozenset({FlagKind.PUBLISHED_TEMPERATURE, FlagKind.PUBLISHED_TEMPERATURE_RANGE,
                             FlagKind.PUBLISHED_ANCHORING})


@dataclass(frozen=True)
class Flag:
    """One flag: its kind and the values its description needs (see :class:`FlagKind`)."""

    kind: FlagKind
    data: Mapping[str, Any] = field(default_factory=dict)

    def __getitem__(self, key: str) -> Any:
        return self.data[key]

    @property
    def blocks_ranking(self) -> bool:
        """Whether the flag keeps a model out of the recommendation (a fit flag, not a note)."""
        return self.kind not in NOTE_KINDS

    @property
    def text(self) -> str:
        return describe(self)

    def __str__(self) -> str:
        return describe(self)


def flag(kind: FlagKind, **data: Any) -> Flag:
    return Flag(kind, data)



#: The wording of each kind, filled from the flag's data (and the few derived fields of
#: :func:`_fields`).
_WORDING: dict[FlagKind, str] = {
    FlagKind.DID_NOT_CONVERGE: "did not converge: {detail}",
    FlagKind.STEPS_REJECTED: "model failed at some trial parameters (steps rejected): {detail}",
    FlagKind.MODEL_ERROR: "model error: {detail}",
    FlagKind.TOO_FEW_POINTS: "too few points ({n_points} points for {n_params} free parameters)",
    FlagKind.SINGULAR: "singular (the data carry no information on {names})",
    FlagKind.SINGULAR_COMBINATION: "singular (no information on a combination of {names})",
    FlagKind.ILL_CONDITIONED: "ill-conditioned (condition number {condition_number:.3g})",
    FlagKind.AT_BOUND: "parameter {name} at bound ({side} = {bound:g})",
    FlagKind.SEVERAL_MINIMA: ("several minima: from the usual start the fit stopped at chi2 "
                              "{chi2_first:.4g} ({first_words}); started at {start_words} it "
                              "reached {chi2:.4g} ({found_words}), which is kept"),
    FlagKind.TOO_FEW_TO_JUDGE: ("too few points to judge a refitted model ({n_points} points for "
                                "{n_params} free parameters)"),
    FlagKind.TRIAL_FAILED: "at trial limit {limit:g} mol/kg: {detail}",
    FlagKind.FOLD_TOO_FEW: "fold {fold}/{folds}: too few points ({n_points} for {n_params} free parameters)",
    FlagKind.FOLD_UNSOLVED: "fold {fold}/{folds}: {reason}",
    FlagKind.FOLD_NOT_CONVERGED: "fold {fold}/{folds}: did not converge: {detail}",
    FlagKind.FOLD_HELDOUT_ERROR: "fold {fold}/{folds}: model error on held-out points: {detail}",
    FlagKind.DATA_END: "data end before model fails (highest data molality {top:g} mol/kg)",
    FlagKind.SPARSE: "data too sparse to judge between {low:g} and {high:g} mol/kg",
    FlagKind.DETERMINATION_HELDOUT: (
        "determination: held out, points are predicted to within {worst:.2g} in {quantity_words}, "
        "beyond the tolerance {tolerance:g}: the data determine the parameters poorly (gaps or too "
        "few points); expect predictions within that band, not the tolerance"),
    FlagKind.DETERMINATION_STDERR: ("determination: {name} = {value:.3g} ± {stderr:.2g}, standard "
                                    "error above its value"),
    FlagKind.AUTHORS_TEMPERATURE: ("authors: {model_name} is claimed for {low:g} to {high:g} K; used "
                                   "at {temperature:g} K"),
    FlagKind.AUTHORS_MOLALITY: ("authors: {model_name} is claimed to {claim:g} mol/kg for "
                                "{electrolyte} ({note}); the data here reach {top:g} mol/kg"),
    FlagKind.PUBLISHED_TEMPERATURE: (
        "published: {set_id} holds values for {set_temperature:g} K; judged at {temperature:g} K "
        "with them unchanged ({constant}): an extrapolation in temperature"),
    FlagKind.PUBLISHED_TEMPERATURE_RANGE: (
        "published: {set_id}'s temperature form covers {low:g}-{high:g} K; judged at "
        "{temperature:g} K: an extrapolation in temperature"),
    FlagKind.PUBLISHED_ANCHORING: (
        "published: {set_id} and {dataset} differ by a near-constant {offset:+.3f} in ln gamma± "
        "(spread {spread:.3f}) over {low:g} to {high:g} mol/kg: they anchor the dilute end "
        "differently (gamma± scaled by {scale:.3f}), not the shape{phi_note}; a refit absorbs this "
        "into its dilute parameters"),
}


def _fields(f: Flag) -> dict[str, Any]:
    d = dict(f.data)
    if "names" in d:
        d["names"] = ", ".join(d["names"])
    if "quantity" in d:
        d["quantity_words"] = REGISTRY[d["quantity"]].text
    for key in ("first", "start", "found"):
        if isinstance(d.get(key), Mapping):
            d[f"{key}_words"] = ", ".join(f"{n} = {v:.4g}" for n, v in d[key].items())
    if f.kind is FlagKind.PUBLISHED_ANCHORING:
        phi = d.get("phi_gap")
        d["phi_note"] = (f"; in phi the set and the osmotic data agree within {phi:.3f}"
                         if phi is not None else "")
    return d


def describe(f: Flag) -> str:
    """The flag in words: the one place its wording is made."""
    return _WORDING[f.kind].format(**_fields(f))


def texts(flags: list[Flag] | tuple[Flag, ...]) -> list[str]:
    """The flags in words, for JSON and CSV."""
    return [describe(f) for f in flags]
