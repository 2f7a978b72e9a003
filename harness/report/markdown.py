"""The report as Markdown (CommonMark with pipe tables), figures referenced as PNG files beside it.

Escaping. Every string from the document model is escaped before markup is added: the ASCII
punctuation that can start emphasis, code, links, images, raw HTML, entities or table cells is
backslash-escaped (CommonMark 0.31, sec. 2.4: any ASCII punctuation may be escaped), characters
that only matter at the start of a line (headings, list items, block quotes) are escaped there,
and line breaks become spaces so user text cannot open a block of its own.
"""

from __future__ import annotations

import re

from saltbench.report.document import (
    Bullets,
    Document,
    Fields,
    Figure,
    Notice,
    Paragraph,
    Section,
    SignOff,
    Table,
)

_INLINE = re.compile(r"([\\`*_\[\]<>|~&!#(){}])")
_LINE_START = re.compile(r"^(\s*)([-+=>]|\d+[.)])")


def escape(text: str, line_start: bool = True) -> str:
    """``text`` as Markdown that renders to exactly that text; ``line_start=False`` where the
    text follows other inline content (a table cell, a heading, a field value), where list and
    quote markers cannot start a block."""
    one_line = re.sub(r"[\r\n\t\f\v]+", " ", str(text))
    out = _INLINE.sub(r"\\\1", one_line)
    if not line_start:
        return out
    return _LINE_START.sub(lambda mt: mt.group(1) + "\\" + mt.group(2) if mt.group(2)[0] in "-+=>"
                           else mt.group(1) + mt.group(2)[:-1] + "\\" + mt.group(2)[-1], out)


def _table(t: Table) -> list[str]:
    labels = {"memory": " (FROM MEMORY)", "recommended": " (recommended)", "invented": " (INVENTED)"}
    lines = [f"*{escape(t.caption, False)}*", ""]
    lines.append("| " + " | ".join(escape(c, False) or " " for c in t.columns) + " |")
    lines.append("|" + "|".join("---:" if n else ":---" for n in t.numeric) + "|")
    for i, row in enumerate(t.rows):
        cells = [escape(c, False) for c in row]
        mark = t.marks[i] if t.marks else ""
        if mark and cells:
            cells[0] = f"**{cells[0]}**{escape(labels.get(mark, ''))}"
        lines.append("| " + " | ".join(cells) + " |")
    lines.append("")
    return lines


def _block(b, figure_dir: str, numbers: dict[str, int]) -> list[str]:
    if isinstance(b, Paragraph):
        return [escape(b.text), ""]
    if isinstance(b, Notice):
        tag = "Caution" if b.kind == "caution" else "Note"
        return [f"> **{tag}: {escape(b.title, False)}.** {escape(b.text, False)}", ""]
    if isinstance(b, Fields):
        return [f"- **{escape(k, False)}:** {escape(v, False)}" for k, v in b.pairs] + [""]
    if isinstance(b, Bullets):
        return [f"- {escape(item)}" for item in b.items] + [""]
    if isinstance(b, Table):
        return _table(b)
    if isinstance(b, Figure):
        # the file name is ours (a slug made by the writer), not user text
        return [f"![{escape(b.alt, False)}]({figure_dir}/{b.key}.png)", "",
                f"*Figure {numbers[b.key]}. {escape(b.caption, False)}*", ""]
    if isinstance(b, SignOff):
        lines = ["| Role | Name | Signature | Date |", "|:---|:---|:---|:---|"]
        lines += [f"| {escape(r, False)} | | | |" for r in b.roles]
        return lines + [""]
    raise TypeError(f"unknown block {type(b).__name__}")


def _section(s: Section, level: int, figure_dir: str, numbers: dict[str, int]) -> list[str]:
    lines = ["#" * level + " " + escape(s.heading, False), ""]
    for b in s.blocks:
        lines += _block(b, figure_dir, numbers)
    for c in s.children:
        lines += _section(c, level + 1, figure_dir, numbers)
    return lines


def render_markdown(doc: Document, figure_dir: str = "figures") -> str:
    numbers = {f.key: i for i, f in enumerate(doc.figures(), start=1)}
    lines = [f"# {escape(doc.title, False)}", "", f"*{escape(doc.subtitle, False)}*", ""]
    for s in doc.sections:
        lines += _section(s, 2, figure_dir, numbers)
    lines += ["---", "", escape("Results hold only for the data, temperature and tolerance stated; for "
                                "regulated or safety-related use verify under local codes and licensed "
                                "practice."), ""]
    return "\n".join(lines)
