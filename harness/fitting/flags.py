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
    # A validity scan's account of its range.
    TOO_FEW_TO_JUDGE = "too-few-to-judge"  # n_points, n_params
    TRIAL_FAILED = "trial-failed"  # limit (mol/kg), detail: why the fit at that limit failed
    DATA_END = "data-end"  # top: highest data molality
    SPARSE = "sparse"  # low, high: a stretch the data are too sparse to judge
    # Notes of the comparison: they describe, they do not unrank.
    DETERMINATION_HELDOUT = "determination-heldout"  # worst, quantity ("ln_gamma"/"osmotic"), tolerance
    DETERMINATION_STDERR = "determination-stderr"  # name, value, stderr
    AUTHORS_TEMPERATURE = "authors-temperature"  # model_name, low, high (K), temperature (K)
    AUTHORS_MOLALITY = "authors-molality"  # model_name, claim, electrolyte, note, top
    PUBLISHED_TEMPERATURE = "published-temperature"  # set_id, set_temperature, temperature, constant
    PUBLISHED_ANCHORING = "published-anchoring"  # set_id, dataset, offset, spread, low, high, phi_gap


#: Kinds that describe a result without making it unfit to rank.
NOTE_KINDS = frozenset({
    FlagKind.DATA_END, FlagKind.SPARSE, FlagKind.DETERMINATION_HELDOUT, FlagKind.DETERMINATION_STDERR,
    FlagKind.AUTHORS_TEMPERATURE, FlagKind.AUTHORS_MOLALITY, FlagKind.PUBLISHED_TEMPERATURE,
    FlagKind.PUBLISHED_ANCHORING})
#: Kinds after which a fit has no usable solution (``FitResult.ok`` is false).
FAILED_FIT_KINDS = frozenset({
    FlagKind.MODEL_ERROR, FlagKind.SINGULAR, FlagKind.SINGULAR_COMBINATION, FlagKind.TOO_FEW_POINTS,
    FlagKind.DID_NOT_CONVERGE})
#: Notes on how well the data determine the parameters, and on a published set.
DETERMINATION_KINDS = frozenset({FlagKind.DETERMINATION_HELDOUT, FlagKind.DETERMINATION_STDERR})
PUBLISHED_KINDS = frozenset({FlagKind.PUBLISHED_TEMPERATURE, FlagKind.PUBLISHED_ANCHORING})


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


_QUANTITY = {"ln_gamma": "ln gamma±", "osmotic": "phi"}


def describe(f: Flag) -> str:
    """The flag in words: the one place its wording is made."""
    d = f.data
    k = f.kind
    if k is FlagKind.DID_NOT_CONVERGE:
        return f"did not converge: {d['detail']}"
    if k is FlagKind.STEPS_REJECTED:
        return f"model failed at some trial parameters (steps rejected): {d['detail']}"
    if k is FlagKind.MODEL_ERROR:
        return f"model error: {d['detail']}"
    if k is FlagKind.TOO_FEW_POINTS:
        return f"too few points ({d['n_points']} points for {d['n_params']} free parameters)"
    if k is FlagKind.SINGULAR:
        return f"singular (the data carry no information on {', '.join(d['names'])})"
    if k is FlagKind.SINGULAR_COMBINATION:
        return f"singular (no information on a combination of {', '.join(d['names'])})"
    if k is FlagKind.ILL_CONDITIONED:
        return f"ill-conditioned (condition number {d['condition_number']:.3g})"
    if k is FlagKind.AT_BOUND:
        return f"parameter {d['name']} at bound ({d['side']} = {d['bound']:g})"
    if k is FlagKind.TOO_FEW_TO_JUDGE:
        return (f"too few points to judge a refitted model ({d['n_points']} points for "
                f"{d['n_params']} free parameters)")
    if k is FlagKind.TRIAL_FAILED:
        return f"at trial limit {d['limit']:g} mol/kg: {d['detail']}"
    if k is FlagKind.DATA_END:
        return f"data end before model fails (highest data molality {d['top']:g} mol/kg)"
    if k is FlagKind.SPARSE:
        return f"data too sparse to judge between {d['low']:g} and {d['high']:g} mol/kg"
    if k is FlagKind.DETERMINATION_HELDOUT:
        return (f"determination: held out, points are predicted to within {d['worst']:.2g} in "
                f"{_QUANTITY[d['quantity']]}, beyond the tolerance {d['tolerance']:g}: the data determine "
                "the parameters poorly (gaps or too few points); expect predictions within that band, not "
                "the tolerance")
    if k is FlagKind.DETERMINATION_STDERR:
        return (f"determination: {d['name']} = {d['value']:.3g} ± {d['stderr']:.2g}, standard error "
                "above its value")
    if k is FlagKind.AUTHORS_TEMPERATURE:
        return (f"authors: {d['model_name']} is claimed for {d['low']:g} to {d['high']:g} K; used at "
                f"{d['temperature']:g} K")
    if k is FlagKind.AUTHORS_MOLALITY:
        return (f"authors: {d['model_name']} is claimed to {d['claim']:g} mol/kg for {d['electrolyte']} "
                f"({d['note']}); the data here reach {d['top']:g} mol/kg")
    if k is FlagKind.PUBLISHED_TEMPERATURE:
        return (f"published: {d['set_id']} holds values for {d['set_temperature']:g} K; judged at "
                f"{d['temperature']:g} K with them unchanged ({d['constant']}): an extrapolation in "
                "temperature")
    if k is FlagKind.PUBLISHED_ANCHORING:
        phi = d.get("phi_gap")
        phi_note = f"; in phi the set and the osmotic data agree within {phi:.3f}" if phi is not None else ""
        return (f"published: {d['set_id']} and {d['dataset']} differ by a near-constant {d['offset']:+.3f} "
                f"in ln gamma± (spread {d['spread']:.3f}) over {d['low']:g} to {d['high']:g} mol/kg: they "
                f"anchor the dilute end differently (gamma± scaled by {d['scale']:.3f}), not the "
                f"shape{phi_note}; a refit absorbs this into its dilute parameters")
    raise ValueError(f"no wording for flag kind {k!r}")  # pragma: no cover - every kind is above


def texts(flags: list[Flag] | tuple[Flag, ...]) -> list[str]:
    """The flags in words, for JSON and CSV."""
    return [describe(f) for f in flags]
