"""The report as one self-contained HTML file: inline styles, figures as inline SVG.

The page needs no network access to be read: no scripts, no web fonts, no linked files. The
template is Jinja2's, with autoescaping on; only the SVG of the figures, which eaveline drew,
goes in unescaped.
"""

from __future__ import annotations

import jinja2

from .blocks import Beside, Figure, Paragraph, Table
from .drawing import FULL_WIDTH_MM, figure_svg

__all__ = ["render_html"]

_TEMPLATE = """<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>{{ doc.title }}</title>
<style>
body { font-family: "DejaVu Sans", Verdana, sans-serif; color: #34403f; margin: 2em auto;
       max-width: 52em; font-size: 10.5pt; line-height: 1.35; }
h1 { font-size: 18pt; margin-bottom: 0.2em; } h2 { font-size: 13.5pt; margin-top: 2em;
     border-bottom: 1px solid #cfd8d7; }
table { border-collapse: collapse; margin: 0.6em 0 1em; font-size: 9pt; }
caption { text-align: left; font-weight: bold; padding-bottom: 0.3em; width: max-content;
          max-width: 48em; }
th, td { padding: 0.15em 0.6em; border-bottom: 1px solid #e3e8e7; }
th { background: #eef4f3; } td.r, th.r { text-align: right; } td.l, th.l { text-align: left; }
tr.total td { font-weight: bold; border-top: 1px solid #9fb3b1; }
p.note { font-size: 9pt; color: #5d6b6a; } p.lead { font-size: 11.5pt; }
figure { margin: 0.8em 0; } figcaption { font-size: 9pt; color: #5d6b6a; }
figure svg { max-width: 100%; height: auto; }
.beside { display: flex; gap: 1.2em; align-items: flex-start; flex-wrap: wrap; }
.beside figure { flex: 1 1 60%; } .beside table { flex: 0 0 auto; }
footer { margin-top: 3em; font-size: 8.5pt; color: #5d6b6a; }
</style>
</head>
<body>
{% macro table(t) -%}
{% set align = t.alignment() %}
<table class="report" data-key="{{ t.key }}">
{% if t.caption %}<caption>{{ t.caption }}</caption>{% endif %}
{% if t.columns | select | list %}<tr>
{%- for c in t.columns %}<th class="{{ align[loop.index0] }}">{{ c }}</th>{% endfor -%}
</tr>{% endif %}
{% for row in t.rows %}<tr{% if loop.revindex <= t.total_rows %} class="total"{% endif %}>
{%- for cell in row %}<td class="{{ align[loop.index0] }}">{{ cell }}</td>{% endfor -%}
</tr>
{% endfor %}</table>
{%- endmacro %}
{% macro figure(f) -%}
<figure data-key="{{ f.key }}">{{ svgs[f.key] | safe }}
<figcaption>{{ f.caption }}</figcaption></figure>
{%- endmacro %}
{% for section in doc.sections %}
<section id="{{ section.key }}">
{% if loop.first %}<h1>{{ doc.title }}</h1>{% else %}<h2>{{ section.title }}</h2>
{% endif %}
{% for block in section.blocks %}
{% if block is paragraph %}<p class="{{ block.style }}">{{ block.text }}</p>
{% elif block is table %}{{ table(block) }}
{% elif block is figure %}{{ figure(block) }}
{% elif block is beside %}
<div class="beside">{{ figure(block.figure) }}{{ table(block.table) }}</div>
{% endif %}
{% endfor %}
</section>
{% endfor %}
<footer>{{ doc.footer }}</footer>
</body>
</html>
"""


def _environment() -> jinja2.Environment:
    env = jinja2.Environment(autoescape=True, trim_blocks=True, lstrip_blocks=True,
                             undefined=jinja2.StrictUndefined)
    env.tests.update({
        "paragraph": lambda b: isinstance(b, Paragraph), "table": lambda b: isinstance(b, Table),
        "figure": lambda b: isinstance(b, Figure), "beside": lambda b: isinstance(b, Beside),
    })
    return env


def _figures(document) -> list[tuple[Figure, float]]:
    out = []
    for section in document.sections:
        for block in section.blocks:
            if isinstance(block, Figure):
                out.append((block, FULL_WIDTH_MM))
            elif isinstance(block, Beside):
                out.append((block.figure, FULL_WIDTH_MM * 0.6))
    return out


def render_html(document, *, progress=None) -> str:
    """Return the report as the text of one self-contained HTML page.

    Parameters
    ----------
    document : layout.report.blocks.ReportDocument
    progress : callable, keyword-only, optional
        Called as ``progress(label, done, total)`` before each figure is drawn.
    """
    figures = _figures(document)
    svgs = {}
    for k, (block, width) in enumerate(figures):
        if progress is not None:
            progress(f"drawing figure {k + 1} of {len(figures)}", k, len(figures))
        svgs[block.key] = figure_svg(block, width_mm=width)
    return _environment().from_string(_TEMPLATE).render(doc=document, svgs=svgs)
