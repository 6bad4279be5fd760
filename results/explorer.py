"""The front explorer: one self-contained HTML page (plotly, embedded; nothing fetched) in which the
engineer filters a run's front and reads any design's key figures and the command for its sheet.

Three linked panels (volume-loss, volume-cost, loss-cost), one fixed colour per material class;
filters for class, frequency range, hot spot, height, cost and loss caps and "robust only"; a click
shows a design's figures and its ``fluxfront pick`` command.  Filters can also be set from the page
address (``explore.html#fmax=100&robust=1``, ``#row=3`` to show a design), which the browser test
uses; script errors are shown
on the page (``#errors``).
"""
from __future__ import annotations

import html
import json
from pathlib import Path

import numpy as np
import pandas as pd
from plotly.offline import get_plotlyjs
from plotly.subplots import make_subplots

from fluxfront.files import write_atomic

from .plots import CLASS_COLOURS, OTHER_COLOURS

SHOWN = ("material", "shape", "stack", "turns", "gap_mm", "gaps", "wire", "parallel", "f_sw_khz", "volume_cm3",
         "total_loss_w", "cost", "inductance_uh", "b_peak_t", "b_sat_t", "temperature_c", "height_mm", "mass_g")

SCRIPT = """
window.onerror = function (msg) { document.getElementById('errors').textContent += msg + '\\n'; };
const D = JSON.parse(document.getElementById('front-data').textContent);
const plot = document.getElementById('front');
const pairs = [['volume_cm3', 'total_loss_w'], ['volume_cm3', 'cost'], ['total_loss_w', 'cost']];
function value(id) { const v = parseFloat(document.getElementById(id).value); return isNaN(v) ? null : v; }
function visible() {
  const classes = new Set([...document.querySelectorAll('.cls:checked')].map(e => e.value));
  const lim = {fmin: value('fmin'), fmax: value('fmax'), tmax: value('tmax'), hmax: value('hmax'),
               cmax: value('cmax'), lmax: value('lmax')};
  const robust = document.getElementById('robust').checked;
  return D.rows.map((r, i) => classes.has(r.class)
      && (lim.fmin === null || r.f_sw_khz >= lim.fmin) && (lim.fmax === null || r.f_sw_khz <= lim.fmax)
      && (lim.tmax === null || r.temperature_c <= lim.tmax) && (lim.hmax === null || r.height_mm <= lim.hmax)
      && (lim.cmax === null || r.cost <= lim.cmax) && (lim.lmax === null || r.total_loss_w <= lim.lmax)
      && (!robust || r.robust !== false));
}
function draw() {
  const keep = visible();
  const traces = [];
  D.classes.forEach(cls => {
    const idx = D.rows.map((r, i) => i).filter(i => keep[i] && D.rows[i].class === cls);
    pairs.forEach(([x, y], p) => traces.push({
      type: 'scatter', mode: 'markers', name: cls, legendgroup: cls, showlegend: p === 0,
      x: idx.map(i => D.rows[i][x]), y: idx.map(i => D.rows[i][y]), customdata: idx,
      xaxis: 'x' + (p ? p + 1 : ''), yaxis: 'y' + (p ? p + 1 : ''),
      marker: {color: D.colours[cls], size: 8, line: {width: 0.5, color: '#333'}},
      hovertemplate: idx.map(i => D.hover[i]) }));
  });
  Plotly.react(plot, traces, D.layout, {displaylogo: false, responsive: true});
  document.getElementById('count').textContent = keep.filter(Boolean).length;
}
function cell(text) { return '<td>' + text + '</td>'; }
function show(i) {
  const design = D.rows[i];
  const lines = D.shown.map(key => '<tr>' + cell(key) + cell(design[key]) + '</tr>');
  document.getElementById('details').innerHTML = '<h3>Front row ' + i + '</h3><table>' + lines.join('') +
    '</table><p>Build sheet: <code>fluxfront pick ' + D.run + ' --row ' + i + '</code></p>';
}
function fromAddress() {
  new URLSearchParams(location.hash.slice(1)).forEach((v, k) => {
    const e = document.getElementById(k);
    if (k === 'row') { show(parseInt(v)); } else if (e && e.type === 'checkbox') { e.checked = v === '1'; }
    else if (e) { e.value = v; }
  });
}
document.querySelectorAll('input').forEach(e => e.addEventListener('input', draw));
fromAddress();
draw();
plot.on('plotly_click', ev => show(ev.points[0].customdata));
"""

CSS = """body{font-family:sans-serif;margin:1em;color:#222}#filters{display:flex;flex-wrap:wrap;gap:1em;
align-items:center;margin-bottom:.5em}#filters label{white-space:nowrap}input[type=number]{width:6em}
#details table{border-collapse:collapse}#details td{border:1px solid #ccc;padding:.15em .5em}
#errors{color:#b00;white-space:pre}.caution{background:#fff4e5;border-left:4px solid #e69500;padding:.4em 1em}"""


def _colour(cls: str, k: int) -> str:
    return CLASS_COLOURS.get(cls, OTHER_COLOURS[k % len(OTHER_COLOURS)])


def explorer_html(front: pd.DataFrame, catalog, run_dir: str, caution: str) -> str:
    """The page for a front (rows of pareto.csv); ``caution`` is the project's hardware note."""
    rows = front.copy()
    rows["class"] = rows["material"].map(lambda m: catalog.materials[m].class_ if m in catalog.materials else m)
    if "robust" not in rows:
        rows["robust"] = None
    shown = [c for c in SHOWN if c in rows]
    records = json.loads(rows[shown + ["class", "robust"]].to_json(orient="records", double_precision=6))
    hover = [html.escape(f"row {i}: {r['material']} {r['stack']}x{r['shape']} N={r['turns']} {r['f_sw_khz']:g} kHz")
             + "<br>%{x:.4g}, %{y:.4g}<extra></extra>" for i, r in rows.iterrows()]
    classes = sorted(rows["class"].unique())
    layout = make_subplots(rows=1, cols=3, horizontal_spacing=0.07).update_layout(
        height=460, margin=dict(t=30, l=50, r=10, b=50), legend=dict(orientation="h", y=-0.2))
    for p, (x, y) in enumerate((("boxed volume [cm³]", "inductor loss [W]"), ("boxed volume [cm³]", "cost"),
                                ("inductor loss [W]", "cost")), start=1):
        layout.update_xaxes(title_text=x, row=1, col=p)
        layout.update_yaxes(title_text=y, row=1, col=p)
    data = {"rows": records, "hover": hover, "classes": classes, "shown": shown, "run": str(run_dir),
            "colours": {c: _colour(c, k) for k, c in enumerate(classes)},
            "layout": json.loads(layout.layout.to_json())}
    boxes = "".join(f"<label><input type='checkbox' class='cls' value='{html.escape(c)}' checked> {html.escape(c)}"
                    f"</label>" for c in classes)
    numbers = "".join(f"<label>{text} <input type='number' id='{key}' step='any'></label>" for key, text in (
        ("fmin", "f from [kHz]"), ("fmax", "to"), ("tmax", "hot spot at most [C]"), ("hmax", "height at most [mm]"),
        ("cmax", "cost at most"), ("lmax", "loss at most [W]")))
    robust = "<label><input type='checkbox' id='robust'> robust only</label>" if front.get("robust") is not None \
        else "<label><input type='checkbox' id='robust' disabled> robust only (not a robust run)</label>"
    plotly_js = f"<script>{get_plotlyjs()}</script>"
    payload = json.dumps(data).replace("</", "<\\/")
    return (f"<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'><title>Front of {html.escape(str(run_dir))}"
            f"</title><style>{CSS}</style>{plotly_js}</head><body>"
            f"<h1>Front of {html.escape(str(run_dir))}</h1><p class='caution'>{html.escape(caution)}</p>"
            f"<div id='filters'>{boxes}{numbers}{robust}<span><b id='count'></b> designs shown</span></div>"
            f"<div id='front'></div><div id='details'><p>Click a design to read its figures.</p></div>"
            f"<pre id='errors'></pre><script id='front-data' type='application/json'>{payload}</script>"
            f"<script>{SCRIPT}</script></body></html>")


def write_explorer(run_dir, front: pd.DataFrame, catalog, caution: str, out=None) -> Path:
    path = Path(out) if out else Path(run_dir) / "explore.html"
    return write_atomic(path, explorer_html(front.replace({np.nan: None}), catalog, str(run_dir), caution))
