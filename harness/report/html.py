"""The report as one self-contained HTML file: figures embedded as base64 PNG, styles inline, no
script and no external resource, so it opens and prints without a network.

Escaping. The page is rendered by Jinja2 with autoescape on for every value, so each citation,
title or name (all plain text in the document model) reaches the page as text, never as markup.
The figures are PNG bytes encoded here as base64, an alphabet with nothing to escape.

Printing. The ``@page`` rule leaves the paper size to the printer (A4 or Letter) and sets
margins that, with the column widths below, fit the narrower page (A4, 210 mm) and the shorter
one (Letter, 279 mm); figures, notices and table rows are kept whole across page breaks.
"""

from __future__ import annotations

import base64

from saltbench.report.document import Document

STYLE = """
:root { --ink: #1a1a1a; --muted: #555; --rule: #bdbdbd; --memo: #fff3d6; --memo-edge: #b36b00;
        --caution-edge: #8a1c1c; --caution: #fbecec; --rec: #e6f0f7; }
html { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: var(--ink);
       font-size: 10.5pt; line-height: 1.4; }
body { max-width: 182mm; margin: 0 auto; padding: 8mm 6mm 16mm; }
h1 { font-size: 17pt; margin: 0 0 2pt; }
.subtitle { color: var(--muted); margin: 0 0 10pt; font-size: 9pt; }
h2 { font-size: 13pt; border-bottom: 1.5pt solid var(--ink); padding-bottom: 2pt; margin-top: 18pt; }
h3 { font-size: 11pt; margin: 12pt 0 4pt; }
nav ul { columns: 2; font-size: 9pt; padding-left: 0; list-style: none; }
table { border-collapse: collapse; width: 100%; margin: 4pt 0 10pt; font-size: 8pt; }
caption { text-align: left; font-size: 8.5pt; color: var(--muted); caption-side: top; padding-bottom: 3pt; }
th, td { border-top: 0.5pt solid var(--rule); border-bottom: 0.5pt solid var(--rule); padding: 2pt 4pt;
         vertical-align: top; text-align: left; }
th { background: #f0f0f0; font-weight: bold; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
th.num { text-align: right; }
.wide { overflow-x: auto; }
td.mono { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 7pt;
          word-break: break-all; }
tr.memory td { background: var(--memo); }
tr.memory td:first-child { border-left: 3pt solid var(--memo-edge); }
tr.recommended td { background: var(--rec); font-weight: bold; }
.badge { display: inline-block; border: 0.75pt solid currentColor; border-radius: 2pt; padding: 0 3pt;
         margin-left: 4pt; font-size: 6.5pt; font-weight: bold; text-transform: uppercase; }
tr.memory .badge { color: var(--memo-edge); }
dl.fields { display: grid; grid-template-columns: 42mm 1fr; gap: 2pt 8pt; font-size: 9pt; }
dl.fields dt { font-weight: bold; }
dl.fields dd { margin: 0; overflow-wrap: anywhere; }
.notice { border-left: 4pt solid var(--caution-edge); background: var(--caution); padding: 5pt 8pt;
          margin: 6pt 0; font-size: 9pt; }
.notice.memory { border-left-color: var(--memo-edge); background: var(--memo); }
.notice strong { display: block; }
figure { margin: 8pt 0 12pt; }
figure img { width: 100%; height: auto; display: block; }
figcaption { font-size: 8.5pt; color: var(--muted); margin-top: 3pt; }
table.signoff td { height: 12mm; }
table.signoff td:first-child { width: 28mm; font-weight: bold; }
footer { margin-top: 18pt; font-size: 8pt; color: var(--muted); border-top: 0.5pt solid var(--rule); }
@page { margin: 15mm 14mm 16mm; }
@media print {
  html { font-size: 9.5pt; }
  body { max-width: none; padding: 0; }
  nav { display: none; }
  h2 { break-after: avoid; }
  h3 { break-after: avoid; }
  section.top.electrolyte { break-before: page; }
  figure, .notice, tr, table.signoff, dl.fields { break-inside: avoid; }
  thead { display: table-header-group; }
  tr.memory td, tr.recommended td, .notice, th { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
"""

TEMPLATE = """<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="saltbench {{ version }}">
<title>{{ doc.title }}</title>
<style>{{ style | safe }}</style>
</head>
<body>
<header>
<h1>{{ doc.title }}</h1>
<p class="subtitle" id="created">{{ doc.subtitle }}</p>
</header>
<nav><ul>{% for s in doc.sections %}<li><a href="#{{ s.key }}">{{ s.heading }}</a></li>{% endfor %}</ul></nav>
{% macro block(b) -%}
{%- set k = kind(b) -%}
{%- if k == "paragraph" %}<p>{{ b.text }}</p>
{%- elif k == "notice" %}<div class="notice {{ b.kind }}" role="note"><strong>{{ b.title }}</strong>{{ b.text }}</div>
{%- elif k == "fields" %}<dl class="fields">{% for name, value in b.pairs %}<dt>{{ name }}</dt><dd>{{ value }}</dd>{% endfor %}</dl>
{%- elif k == "bullets" %}<ul>{% for item in b.items %}<li>{{ item }}</li>{% endfor %}</ul>
{%- elif k == "table" %}
<div class="wide"><table id="table-{{ b.key }}" data-table="{{ b.key }}">
<caption>{{ b.caption }}</caption>
<thead><tr>{% for c in b.columns %}<th{% if b.numeric[loop.index0] %} class="num"{% endif %} scope="col">{{ c }}</th>{% endfor %}</tr></thead>
<tbody>
{%- for row in b.rows %}{% set mark = b.marks[loop.index0] if b.marks else "" %}
<tr{% if mark %} class="{{ mark }}"{% endif %}>{% for cell in row %}{% set i = loop.index0 %}<td class="{{ 'num' if b.numeric[i] else '' }}{{ ' mono' if b.mono and b.mono[i] else '' }}">{{ cell }}{% if i == 0 and mark %}<span class="badge">{{ mark_label(mark) }}</span>{% endif %}</td>{% endfor %}</tr>
{%- endfor %}
</tbody>
</table></div>
{%- elif k == "figure" %}
<figure id="fig-{{ b.key }}"><img src="data:image/png;base64,{{ b64(b.png) }}" alt="{{ b.alt }}">
<figcaption>Figure {{ figno(b.key) }}. {{ b.caption }}</figcaption></figure>
{%- elif k == "signoff" %}
<table class="signoff" id="signoff"><thead><tr><th>Role</th><th>Name</th><th>Signature</th><th>Date</th></tr></thead>
<tbody>{% for role in b.roles %}<tr><td>{{ role }}</td><td></td><td></td><td></td></tr>{% endfor %}</tbody></table>
{%- endif %}
{%- endmacro %}
{% macro section(s, level, top) -%}
<section id="{{ s.key }}" class="{{ 'top' if top else 'sub' }}{{ ' electrolyte' if s.key.startswith('electrolyte-') else '' }}">
<h{{ level }}>{{ s.heading }}</h{{ level }}>
{% for b in s.blocks %}{{ block(b) }}
{% endfor %}
{% for c in s.children %}{{ section(c, level + 1, False) }}{% endfor %}
</section>
{%- endmacro %}
<main>
{% for s in doc.sections %}{{ section(s, 2, True) }}
{% endfor %}
</main>
<footer><p>{{ doc.title }} · {{ doc.subtitle }}. Results hold only for the data, temperature and tolerance
stated; for regulated or safety-related use verify under local codes and licensed practice.</p></footer>
</body>
</html>
"""

MARK_LABELS = {"memory": "from memory", "recommended": "recommended", "invented": "invented"}


def render_html(doc: Document, version: str) -> str:
    import jinja2

    env = jinja2.Environment(autoescape=True, undefined=jinja2.StrictUndefined,
                             trim_blocks=False, lstrip_blocks=False, keep_trailing_newline=True)
    numbers = {f.key: i for i, f in enumerate(doc.figures(), start=1)}
    env.globals.update(kind=lambda b: type(b).__name__.lower(),
                       b64=lambda data: base64.b64encode(data).decode("ascii"),
                       figno=lambda key: numbers[key],
                       mark_label=lambda m: MARK_LABELS.get(m, m))
    return env.from_string(TEMPLATE).render(doc=doc, style=STYLE, version=version)
