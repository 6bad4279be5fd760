"""Rendering a build sheet: sections of blocks to self-contained HTML and to Markdown with PNG files.

A section is ``(title, blocks)``; a block is ``("p", text)``, ``("banner", warning)``, ``("ul", items)``,
``("grid", [("img", Figure), ...])`` (figures side by side),
``("table", header, rows)``, ``("keytable", rows)`` or ``("img", Figure)``.  The HTML embeds the
figures as data URIs (opens offline, no links out).
"""
from __future__ import annotations

import base64
import html
import io
import json
import re
from dataclasses import dataclass

import numpy as np

from . import plots
from .report import SAFETY_NOTE

KEY_FIGURES_ID = "key-figures"


@dataclass
class Figure:
    name: str
    png: bytes
    caption: str


def figure_png(fig, name, caption) -> Figure:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", bbox_inches="tight", dpi=110)
    plots.plt.close(fig)
    return Figure(name, buf.getvalue(), caption)


CSS = """body{font-family:sans-serif;max-width:60em;margin:2em auto;padding:0 1em;color:#222;line-height:1.45}
table{border-collapse:collapse;margin:.6em 0}td,th{border:1px solid #bbb;padding:.25em .6em;text-align:left}
th{background:#eee}img{max-width:100%}h2{border-bottom:2px solid #ccc;margin-top:1.6em}
figcaption{font-size:.9em;color:#555}.caution{background:#fff4e5;border-left:4px solid #e69500;padding:.5em 1em}
.banner{background:#fde2e1;border:2px solid #c0392b;color:#7b1a12;padding:.6em 1em;font-weight:bold}
.grid{display:grid;grid-template-columns:repeat(auto-fill,minmax(22em,1fr));gap:.6em}
@media print{body{max-width:none;margin:0;font-size:10pt}details{display:none}section,figure,table{break-inside:avoid}
.grid{grid-template-columns:1fr 1fr}}"""


def _figure_html(fig) -> str:
    data = base64.b64encode(fig.png).decode()
    return (f"<figure><img alt='{html.escape(fig.caption)}' src='data:image/png;base64,{data}'>"
            f"<figcaption>{html.escape(fig.caption)}</figcaption></figure>")


def render_html(title: str, sections) -> str:
    out = [f"<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'><title>{html.escape(title)}</title>"
           f"<style>{CSS}</style></head><body><h1>{html.escape(title)}</h1>"
           f"<p class='caution'>{html.escape(SAFETY_NOTE)}</p>"]
    for name, blocks in sections:
        out.append(f"<section><h2>{html.escape(name)}</h2>")
        for block in blocks:
            kind = block[0]
            if kind == "p":
                out.append(f"<p>{html.escape(block[1])}</p>")
            elif kind == "banner":
                out.append(f"<p class='banner' role='alert'>{html.escape(block[1])}</p>")
            elif kind == "ul":
                out.append("<ul>" + "".join(f"<li>{html.escape(x)}</li>" for x in block[1]) + "</ul>")
            elif kind == "table":
                out.append("<table><tr>" + "".join(f"<th>{html.escape(h)}</th>" for h in block[1]) + "</tr>")
                out.extend("<tr>" + "".join(f"<td>{html.escape(str(c))}</td>" for c in r) + "</tr>" for r in block[2])
                out.append("</table>")
            elif kind == "grid":
                out.append("<div class='grid'>" + "".join(_figure_html(b[1]) for b in block[1]) + "</div>")
            elif kind == "keytable":
                out.append("<details><summary>every figure, full precision (as `fluxfront evaluate` writes "
                           "it)</summary>")
                out.append(f"<table id='{KEY_FIGURES_ID}'><tr><th>column</th><th>value</th></tr>")
                out.extend(f"<tr><td>{html.escape(k)}</td><td>{html.escape(json.dumps(v if not isinstance(v, np.generic) else v.item()))}</td></tr>"
                           for k, v in block[1])
                out.append("</table></details>")
            elif kind == "img":
                out.append(_figure_html(block[1]))
        out.append("</section>")
    out.append("</body></html>")
    return "\n".join(out)


def md(text) -> str:
    """Text shown literally in Markdown: characters that would format or link are escaped."""
    return re.sub(r"([\\`*_{}\[\]<>#|!$])", r"\\\1", str(text))


def render_markdown(title: str, sections) -> tuple[str, list]:
    out, files = [f"# {md(title)}", "", f"> {SAFETY_NOTE}", ""], []

    def cell(x):
        return md(x)

    for name, blocks in sections:
        out += [f"## {name}", ""]
        for block in blocks:
            kind = block[0]
            if kind == "p":
                out += [md(block[1]), ""]
            elif kind == "banner":
                out += [f"> **WARNING: {md(block[1])}**", ""]
            elif kind == "ul":
                out += [f"- {md(x)}" for x in block[1]] + [""]
            elif kind in ("table", "keytable"):
                head, rows = (block[1], block[2]) if kind == "table" else (["column", "value"], block[1])
                out.append("| " + " | ".join(head) + " |")
                out.append("|" + "---|" * len(head))
                out += ["| " + " | ".join(cell(c) for c in r) + " |" for r in rows]
                out.append("")
            elif kind in ("img", "grid"):
                for fig in [block[1]] if kind == "img" else [b[1] for b in block[1]]:
                    files.append(fig)
                    out += [f"![{md(fig.caption)}]({fig.name}.png)", ""]
    return "\n".join(out), files
