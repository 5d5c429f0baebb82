"""A report as one HTML page: every text escaped, every image inline, no scripts, no links out.

The same markup feeds the PDF (Qt's rich text reads a subset of HTML and CSS), so the layout
keeps to what both understand: headings, paragraphs, lists and tables, with the two
histograms side by side in a table row. ``image`` says how a figure goes into the page:
inline SVG for browsers, an ``<img>`` naming a resource for the PDF.
"""

from __future__ import annotations

from collections.abc import Callable
from html import escape

from .content import ColumnSection, Figure, Report

ImageMarkup = Callable[[Figure, str], str]

SCREEN_STYLE = """
body { font-family: 'DejaVu Sans', Arial, Helvetica, sans-serif; font-size: 10pt;
       color: #222222; background: #ffffff; max-width: 1000px; margin: 16px auto;
       padding: 0 16px; }
@media print { h2.column { page-break-before: always; } }
"""
COMMON_STYLE = """
h1 { font-size: 18pt; margin-bottom: 4px; }
h2 { font-size: 14pt; margin-top: 22px; border-bottom: 1px solid #bbbbbb; }
h3 { font-size: 11pt; margin-top: 12px; margin-bottom: 4px; }
table { border-collapse: collapse; }
th, td { text-align: left; vertical-align: top; padding: 3px 8px;
         border: 1px solid #d0d0d0; }
th { background-color: #f0f0ee; }
table.figures td { border: none; padding: 0 12px 0 0; }
code, .exact { font-family: 'DejaVu Sans Mono', Consolas, monospace; font-size: 9pt; }
.exact { white-space: nowrap; }
p.formula { font-family: 'DejaVu Sans Mono', Consolas, monospace; font-size: 9pt;
            background-color: #f6f6f4; padding: 4px; margin: 2px 0; }
p.numbers { font-family: 'DejaVu Sans Mono', Consolas, monospace; font-size: 8pt; }
.note { color: #555555; font-size: 9pt; }
.warning { color: #a04000; }
.missing { color: #a04000; font-weight: bold; }
.cautions li { margin-bottom: 3px; }
"""
# For Qt's printing: no page margins of its own (the PDF writer sets them), and every
# column starts on a new page.
PRINT_STYLE = """
body { font-family: 'DejaVu Sans', Arial, Helvetica, sans-serif; font-size: 9pt;
       color: #222222; }
h2.column { page-break-before: always; margin-top: 0; }
h3 { margin-top: 8px; }
"""


def inline_svg(figure: Figure, key: str) -> str:
    """The figure as inline SVG (browsers draw it; no file, no network)."""
    return figure.svg


def _e(text: object) -> str:
    return escape(str(text), quote=True)


def _list(items: list[str], css: str = "") -> str:
    cls = f' class="{css}"' if css else ""
    return f"<ul{cls}>" + "".join(f"<li>{_e(i)}</li>" for i in items) + "</ul>"


def _column(section: ColumnSection, index: int, image: ImageMarkup) -> str:
    out = [f'<h2 class="column" id="{section.anchor}">{index}. {_e(section.header)}</h2>']
    if section.header != section.label:
        out.append(f'<p class="note">Called {_e(section.label)} in the project.</p>')
    out.append(
        f"<p><b>Method:</b> {_e(section.method)}: {_e(section.method_summary)}<br>"
        f"<b>Options:</b> {_e(section.options)}</p>"
    )
    out.append("<h3>Fit</h3>" + _list(section.fit_summary))
    out.append("<h3>Parameters</h3>")
    out.append(
        '<table class="params" width="100%"><tr><th>parameter set</th><th>parameter</th>'
        "<th>value (rounded)</th><th>exact value</th></tr>"
    )
    for row in section.parameters:
        out.append(
            f"<tr><td>{_e(row.group)}</td><td>{_e(row.name)}</td><td>{_e(row.shown)}</td>"
            f'<td class="exact">{_e(row.exact)}</td></tr>'
        )
    out.append("</table>")
    out.append('<p class="note">Rounded for reading; use the exact values.</p>')
    for title, numbers in section.number_lists:
        out.append(f'<p class="note">{_e(title)}:</p><p class="numbers">{_e(numbers)}</p>')
    out.append("<h3>To reverse (x = original, y = scaled)</h3>")
    out.append(
        f"<p>The method's formula: <code>{_e(section.formula)}</code>. With the fitted numbers:</p>"
    )
    for group, formula in section.reverse:
        label = f"{_e(group)}: " if len(section.reverse) > 1 else ""
        out.append(f'<p class="formula">{label}{_e(formula)}</p>')
    if section.warnings:
        out.append("<h3>Warnings</h3>" + _list(section.warnings, "warning"))
    if section.cautions:
        out.append("<h3>Cautions</h3>" + _list(section.cautions))
    out.append("<h3>Distribution before and after</h3>")
    if section.figures:
        cells = "".join(
            f"<td><b>{_e(f.title)}</b><br>{image(f, f'{section.anchor}-{i}')}</td>"
            for i, f in enumerate(section.figures)
        )
        out.append(f'<table class="figures"><tr>{cells}</tr></table>')
        out.append(f'<p class="note">{_e(section.figures_note)}</p>')
    else:
        out.append(f'<p class="missing">{_e(section.figures_missing)}</p>')
    return "\n".join(out)


def render_html(report: Report, image: ImageMarkup = inline_svg, *, printed: bool = False) -> str:
    """The whole report as HTML text (UTF-8, self-contained); ``printed`` for Qt's PDF."""
    style = COMMON_STYLE + PRINT_STYLE if printed else SCREEN_STYLE + COMMON_STYLE
    out = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{_e(report.title)}</title><style>{style}</style></head><body>",
        f"<h1>{_e(report.title)}</h1>",
        '<p class="note">A record of how the columns of a data file were scaled: the '
        "parameters, how to reverse them by hand, and the distribution before and after.</p>",
        '<table class="facts">',
    ]
    out += [f"<tr><th>{_e(k)}</th><td>{_e(v)}</td></tr>" for k, v in report.facts]
    out.append("</table>")
    out.append("<h2>Before you use these numbers</h2>" + _list(report.cautions, "cautions"))
    out.append("<h2>Columns</h2>")
    out.append(
        '<table class="summary" width="100%"><tr><th>column</th><th>method</th><th>options</th>'
        "<th>fitted on</th><th>warnings</th></tr>"
    )
    for i, s in enumerate(report.columns, start=1):
        out.append(
            f'<tr><td><a href="#{s.anchor}">{i}. {_e(s.header)}</a></td><td>{_e(s.method)}</td>'
            f"<td>{_e(s.options)}</td><td>{s.values_fitted:,} values</td>"
            f"<td>{len(s.warnings) or '-'}</td></tr>"
        )
    out.append("</table>")
    if report.left_as_is:
        out.append(f"<p><b>Left as is:</b> {_e(', '.join(report.left_as_is))}</p>")
    out.append(f'<p class="note">{_e(report.rounding_note)}</p>')
    if report.figures_missing:
        out.append(f'<p class="missing">{_e(report.figures_missing)}</p>')
    for i, section in enumerate(report.columns, start=1):
        out.append(_column(section, i, image))
    out.append("</body></html>")
    return "\n".join(out) + "\n"
