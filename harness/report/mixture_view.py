"""A mixture comparison seen through the shape the report's electrolyte helpers read.

A :class:`~saltbench.comparison.mixtures.MixtureComparison` judges every model on one system's
mixture data along ionic strength. The report's tables, manifest and most of its blocks read a
one-salt :class:`~saltbench.comparison.runner.Comparison` (``outcomes``, ``recommendations`` and
``datasets`` keyed by electrolyte); :class:`MixtureView` offers the same keyed by the system's
name, so those helpers serve mixtures unchanged, and keeps what only a mixture has: the data
(for residuals), the stored datasets with their citations and invented marks, and the binary
parameter sets held while the mixing terms were fitted.
"""

from __future__ import annotations

from dataclasses import dataclass, field

#: Wording of a one-salt statement turned to ionic strength (the ranges are ionic strengths).
_ALONG_I = (("lowest molality", "lowest ionic strength"), ("mol/kg", "mol/kg of ionic strength"))


def in_ionic_strength(text: str) -> str:
    """A verdict or recommendation of a mixture comparison, saying that its ranges are ionic
    strengths (the ranking's wording speaks of molality)."""
    for a, b in _ALONG_I:
        text = text.replace(a, b)
    return text


@dataclass(frozen=True)
class HeldSet:
    """A binary (or published mixing) parameter set a model's values were held at."""

    model: str
    set_id: str
    source: str
    from_memory: bool


@dataclass
class MixtureView:
    comparison: object  # MixtureComparison
    data: object  # MixtureData the comparison ran on
    dataset_rows: list  # saltbench.store.mixtures.MixtureDatasetRow
    held_sets: list[HeldSet] = field(default_factory=list)
    sets_asked: list[str] = field(default_factory=list)
    asked: str = ""  # the SYSTEM as given: a system, or one mixture dataset's key

    @property
    def one_dataset(self) -> bool:
        """Whether the report was asked for one mixture dataset (by its key), not a system."""
        return [r.key for r in self.dataset_rows] == [self.asked]

    @property
    def system(self) -> str:
        return self.comparison.system  # type: ignore[attr-defined]

    @property
    def settings(self):
        return self.comparison.settings  # type: ignore[attr-defined]

    @property
    def outcomes(self) -> dict[str, list]:
        return {self.system: list(self.comparison.outcomes)}  # type: ignore[attr-defined]

    @property
    def recommendation(self):
        return self.comparison.recommendation  # type: ignore[attr-defined]

    @property
    def recommendations(self) -> dict:
        return {self.system: self.recommendation}

    @property
    def statement(self) -> str:
        return in_ionic_strength(self.recommendation.statement)

    @property
    def datasets(self) -> dict[str, list[dict]]:
        return {self.system: [dataset_dict(r) for r in self.dataset_rows]}

    @property
    def invented(self) -> bool:
        return any(r.invented for r in self.dataset_rows)

    @property
    def plugin_problems(self) -> list[str]:
        return []

    def records(self) -> list[dict]:
        return self.comparison.records()  # type: ignore[attr-defined]


def dataset_dict(r) -> dict:
    """One stored mixture dataset as the report's data tables and manifest read it."""
    salt = f"({r.salt})" if r.salt else ""
    return {"key": r.key, "property": f"{r.property}{salt}", "n_points": r.n_points, "source": r.source,
            "citation": r.citation, "typed": r.typed, "table_ref": r.table_ref, "origin": r.origin,
            "from_memory": r.from_memory, "invented": r.invented, "content_hash": r.content_hash,
            "system": r.system, "temperature_k": r.temperature_k, "min_ionic_strength": r.min_ionic_strength,
            "max_ionic_strength": r.max_ionic_strength, "note": r.note}
