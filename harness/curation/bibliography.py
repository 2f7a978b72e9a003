"""Bibliography files: ``[key]`` blocks of ``field: value`` lines (format in DEVELOPERS.md)."""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

from saltbench.curation.blocks import read_text
from saltbench.errors import InputFileError

KEY_PATTERN = re.compile(r"^[a-z0-9]+(?:-[a-z0-9]+)*$")
FIELDS = ("authors", "title", "year", "journal", "publisher", "volume", "issue", "pages",
          "edition", "doi", "url", "note")
REQUIRED = ("authors", "title", "year")
DOI_PATTERN = re.compile(r"^10\.\d{4,9}/\S+$")


@dataclass(frozen=True)
class Source:
    key: str
    authors: str
    title: str
    year: int
    journal: str = ""
    publisher: str = ""
    volume: str = ""
    issue: str = ""
    pages: str = ""
    edition: str = ""
    doi: str = ""
    url: str = ""
    note: str = ""
    file: str = ""
    line: int = 0
    extra: dict[str, str] = field(default_factory=dict, compare=False)

    def citation(self) -> str:
        """A plain-text citation: Authors, Title, Journal Volume, Pages (Year). doi:..."""
        authors = "; ".join(a.strip() for a in self.authors.split(";"))
        parts = [authors, self.title]
        if self.journal:
            venue = self.journal + (f" {self.volume}" if self.volume else "")
            venue += f", {self.pages}" if self.pages else ""
            parts.append(f"{venue} ({self.year})")
        else:
            venue = ", ".join(x for x in (self.edition and f"{self.edition} ed.", self.publisher) if x)
            parts.append(f"{venue}, {self.year}" if venue else str(self.year))
        text = ". ".join(p.rstrip(".") for p in parts if p) + "."
        if self.doi:
            text += f" doi:{self.doi}"
        return text


def read_bibliography(path: str | Path) -> list[Source]:
    """Read every entry of a bibliography file; errors name the file, line and field."""
    p = str(path)
    text = read_text(path)
    entries: list[tuple[str, int, dict[str, tuple[str, int]]]] = []
    current: dict[str, tuple[str, int]] | None = None
    for n, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        if line.startswith("["):
            if not line.endswith("]"):
                raise InputFileError(p, n, "key", f"entry header must look like [key], found {line!r}")
            key = line[1:-1].strip()
            if not KEY_PATTERN.match(key):
                raise InputFileError(p, n, "key", f"citation key {key!r} must be lower-case words "
                                     "joined by hyphens")
            if any(k == key for k, _, _ in entries):
                raise InputFileError(p, n, "key", f"citation key {key!r} is defined twice in this file")
            current = {}
            entries.append((key, n, current))
            continue
        if current is None:
            raise InputFileError(p, n, None, "text before the first [key] entry")
        if ":" not in line:
            raise InputFileError(p, n, None, f"expected 'field: value', found {line!r}")
        name, value = (s.strip() for s in line.split(":", 1))
        name = name.lower()
        if name not in FIELDS:
            raise InputFileError(p, n, name, f"unknown bibliography field (known: {', '.join(FIELDS)})")
        if name in current:
            raise InputFileError(p, n, name, f"given twice (first on line {current[name][1]})")
        current[name] = (value, n)
    if not entries:
        raise InputFileError(p, None, None, "no bibliography entries")
    return [_entry(p, key, n, fields) for key, n, fields in entries]


def _entry(p: str, key: str, n: int, fields: dict[str, tuple[str, int]]) -> Source:
    for name in REQUIRED:
        if not fields.get(name, ("", 0))[0]:
            raise InputFileError(p, n, name, f"entry [{key}] has no {name}")
    if not (fields.get("journal", ("", 0))[0] or fields.get("publisher", ("", 0))[0]):
        raise InputFileError(p, n, "journal", f"entry [{key}] needs a journal or a publisher")
    year_text, year_line = fields["year"]
    if not re.fullmatch(r"\d{4}", year_text) or not (1800 <= int(year_text) <= 2100):
        raise InputFileError(p, year_line, "year", f"not a four-digit year: {year_text!r}")
    doi, doi_line = fields.get("doi", ("", 0))
    if doi and not DOI_PATTERN.match(doi):
        raise InputFileError(p, doi_line, "doi", f"not a DOI (expected 10.NNNN/...): {doi!r}")
    values: dict = {k: v for k, (v, _) in fields.items() if k != "year"}
    return Source(key=key, year=int(year_text), file=p, line=n, **values)


def format_entry(key: str, fields: dict[str, object]) -> str:
    """One bibliography entry in the file format above (fields with no value are left out)."""
    if not KEY_PATTERN.match(key):
        raise ValueError(f"citation key {key!r} must be lower-case words joined by hyphens")
    lines = [f"[{key}]"]
    for name in FIELDS:
        value = fields.get(name)
        if value not in (None, ""):
            lines.append(f"{name}: {' '.join(str(value).split())}")
    return "\n".join(lines) + "\n"
