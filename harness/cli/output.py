"""Output formats in one place: an aligned table for people, JSON and CSV for scripts."""

from __future__ import annotations

import io
import json
import math
from collections.abc import Sequence
from typing import Any

import click

FORMATS = ("table", "json", "csv")
format_option = click.option("--format", "fmt", type=click.Choice(FORMATS), default="table",
                             show_default=True, help="Output format.")


def _clean(value: Any) -> Any:
    if hasattr(value, "item") and not isinstance(value, (list, dict, str)):
        try:
            value = value.item()
        except (ValueError, AttributeError):
            pass
    if isinstance(value, float) and (math.isnan(value) or math.isinf(value)):
        return None
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    return value


def to_json(obj: Any) -> str:
    return json.dumps(_clean(obj), indent=2, ensure_ascii=False)


def _cell(value: Any, digits: int = 4) -> str:
    value = _clean(value)
    if value is None:
        return "-"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.{digits}g}"
    if isinstance(value, (list, tuple)):
        return ", ".join(_cell(v) for v in value)
    return str(value)


def table(records: Sequence[dict[str, Any]], columns: Sequence[str] | None = None,
          headers: dict[str, str] | None = None, digits: dict[str, int] | None = None) -> str:
    """Aligned text table; ``digits`` gives a column more significant digits than 4 (a water
    activity of 0.99996 or a temperature of 298.15 K must not print as 1 or 298.1)."""
    if not records:
        return "(nothing to show)"
    cols = list(columns or records[0].keys())
    heads = [(headers or {}).get(c, c) for c in cols]
    rows = [[_cell(r.get(c), (digits or {}).get(c, 4)) for c in cols] for r in records]
    widths = [max(len(h), *(len(row[i]) for row in rows)) for i, h in enumerate(heads)]
    numeric = [all(_is_num(row[i]) for row in rows) for i in range(len(cols))]

    def fmt(cells: list[str]) -> str:
        return "  ".join(c.rjust(w) if num else c.ljust(w)
                         for c, w, num in zip(cells, widths, numeric)).rstrip()

    lines = [fmt(heads), "  ".join("-" * w for w in widths)]
    lines += [fmt(r) for r in rows]
    return "\n".join(lines)


def _is_num(text: str) -> bool:
    try:
        float(text)
        return True
    except ValueError:
        return text == "-"


def to_csv(records: Sequence[dict[str, Any]], columns: Sequence[str] | None = None) -> str:
    import csv

    buf = io.StringIO()
    cols = list(columns or (records[0].keys() if records else []))
    writer = csv.DictWriter(buf, fieldnames=cols, extrasaction="ignore", lineterminator="\n")
    writer.writeheader()
    for r in records:
        writer.writerow({k: ("" if _clean(v) is None else _clean(v)) for k, v in r.items()})
    return buf.getvalue()


def emit(records: Sequence[dict[Any, Any]], fmt: str, columns: Sequence[str] | None = None,
         headers: dict[str, str] | None = None, json_obj: Any = None,
         digits: dict[str, int] | None = None) -> None:
    if fmt == "json":
        click.echo(to_json(records if json_obj is None else json_obj))
    elif fmt == "csv":
        click.echo(to_csv(records, columns), nl=False)
    else:
        click.echo(table(records, columns, headers, digits))


def emit_ingest(report: Any, fmt: str) -> None:
    """What an ingest did (``report.added``, ``.updated``, ``.unchanged``): one JSON object, or a
    line per item."""
    result = {"added": report.added, "updated": report.updated, "unchanged": report.unchanged}
    if fmt == "json":
        emit([], fmt, json_obj=result)
        return
    for what, items in result.items():
        for item in items:
            click.echo(f"{what:9s} {item}")


REGULATED_USE_CAUTION = ("Caution: for dosing, safety limits or regulated measurements, verify these numbers "
                         "under local codes and licensed practice.")


def echo_caution(fmt: str, text: str = REGULATED_USE_CAUTION) -> None:
    """The regulated-use caution: after a table on stdout; on stderr for JSON and CSV, so a
    script's parsed output keeps its shape while a person running it still sees the caution."""
    if fmt == "table":
        click.echo(text)
    else:
        click.echo(text, err=True)


def fold(text: str, indent: str = "", first: str = "") -> str:
    """A prose line folded at 100 columns (tables are never folded); ``first`` prefixes the
    first line, ``indent`` the others."""
    import textwrap

    return textwrap.fill(text, width=100, initial_indent=first, subsequent_indent=indent,
                         break_on_hyphens=False, break_long_words=False)
