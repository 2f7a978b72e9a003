"""A plain document model that every output format renders: sections of paragraphs, notices,
field lists, tables, figures and a sign-off block.

Every string in it is plain text, whoever typed it; the renderers (HTML, Markdown, PDF) add all
markup and escape every string they are given, so a citation or title cannot inject markup.
Numbers are already formatted here, once, so that all formats show the same digits.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field


@dataclass(frozen=True)
class Paragraph:
    text: str


@dataclass(frozen=True)
class Notice:
    """A boxed statement; ``kind`` is ``"caution"`` (limits, safety) or ``"memory"`` (data typed
    from memory, not read off the original)."""

    kind: str
    title: str
    text: str


@dataclass(frozen=True)
class Fields:
    pairs: list[tuple[str, str]]


@dataclass(frozen=True)
class Bullets:
    items: list[str]


@dataclass(frozen=True)
class Table:
    key: str  # stable identifier (used for HTML ids and tests)
    caption: str
    columns: list[str]
    rows: list[list[str]]
    numeric: list[bool]  # right-align these columns
    marks: list[str] = field(default_factory=list)  # per row: "" or "memory" / "recommended" / "invented"
    mono: list[bool] = field(default_factory=list)  # columns shown in a fixed-width font


@dataclass(frozen=True)
class Figure:
    key: str  # file stem of the PNG
    caption: str
    alt: str
    png: bytes


@dataclass(frozen=True)
class SignOff:
    roles: list[str]  # each gets blank name, signature and date lines


@dataclass
class Section:
    key: str
    heading: str
    blocks: list = field(default_factory=list)
    children: list[Section] = field(default_factory=list)


@dataclass
class Document:
    title: str
    subtitle: str
    created: str  # the time stamp: the only content that differs between two identical runs
    sections: list[Section] = field(default_factory=list)

    def figures(self) -> list[Figure]:
        out: list[Figure] = []

        def walk(sec: Section) -> None:
            out.extend(b for b in sec.blocks if isinstance(b, Figure))
            for c in sec.children:
                walk(c)
        for s in self.sections:
            walk(s)
        return out


DASH = "–"  # shown where a number does not exist (no fit, no published set)


def num(x: float | None, digits: int = 4) -> str:
    """The one number format of the report: ``digits`` significant figures, en dash for none."""
    if x is None:
        return DASH
    x = float(x)
    if not math.isfinite(x):
        return DASH
    return f"{x:.{digits}g}"


def molality(x: float | None) -> str:
    return DASH if x is None else f"{float(x):g}"
