"""The prototype build sheet of one design (self-contained HTML and Markdown): assembled from the
sections in sheet_sections.py and rendered twice by render.py."""
from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import pandas as pd

from fluxfront import __version__
from fluxfront.design.designs import DESIGN_COLUMNS, read_design_table, resolve_designs
from fluxfront.design.evaluator import CONSTRAINTS, Context, prepare
from fluxfront.design.spec import load_problem
from fluxfront.design.tolerance import YieldEstimate
from fluxfront.errors import InputError
from fluxfront.files import write_atomic

from .export import write_simulation_files
from .render import render_html, render_markdown
from .sheet_sections import SECTIONS, evaluated, status


@dataclass(frozen=True)
class Pick:
    """What a pick wrote and what the engineer should know at once."""

    folder: Path
    robust: bool                     # every limit met at every tolerance corner
    worst_margin: dict[str, float]   # per limit: the largest normalized constraint over the corners
    yield_estimate: YieldEstimate


def build_sheet_content(ctx: Context, design_row: pd.DataFrame, title: str, trace: dict | None = None):
    """Sections of the build sheet for one design (a one-row frame of design columns), and the sheet.

    ``trace``: where the design comes from (run folder, seed, hashes), shown in the Traceability section.
    """
    sheet = evaluated(ctx, design_row)
    sections = [section for make in (status,) + SECTIONS for section in make(sheet)]
    sections.append(("Traceability", [("table", ["item", "value"], [[k, str(v)] for k, v in _trace(ctx, trace)])]))
    return title, sections, sheet


def _trace(ctx: Context, trace: dict | None) -> list[tuple[str, str]]:
    rows = [("fluxfront version", __version__), ("written", datetime.now(timezone.utc).isoformat(timespec="seconds")),
            ("catalog hash (SHA-256)", ctx.catalog.content_hash())]
    return rows + list((trace or {}).items())


def write_sheet(folder: Path, ctx: Context, design: pd.DataFrame, title: str, trace: dict | None = None) -> Pick:
    """Write FOLDER/build_sheet.html, build_sheet.md, its PNG figures and design.csv; returns the Pick."""
    title, sections, sheet = build_sheet_content(ctx, design, title, trace)
    folder = Path(folder)
    write_atomic(folder / "build_sheet.html", render_html(title, sections))
    md, figs = render_markdown(title, sections)
    for fig in figs:
        write_atomic(folder / f"{fig.name}.png", fig.png)
    write_atomic(folder / "build_sheet.md", md + "\n")
    write_atomic(folder / "design.csv", design.to_csv(index=False))
    write_simulation_files(folder, ctx, resolve_designs(design, ctx.catalog), sheet.ev)
    g = np.stack([ev.constraints[0] for ev in sheet.corner_evaluations])
    return Pick(folder, bool(np.all(g <= 0)), dict(zip(CONSTRAINTS, g.max(axis=0).tolist())), sheet.yield_estimate)


def _title(design: pd.DataFrame, where: str) -> str:
    d = design.iloc[0]
    return (f"Build sheet: {d['material']} {int(d['stack'])}x{d['shape']}, {int(d['turns'])} turns, "
            f"{d['f_sw_khz']:g} kHz ({where})")


def write_pick(run_dir: Path, ctx: Context, front: pd.DataFrame, row: int, trace: dict | None = None) -> Pick:
    """Write RUN_DIR/picks/row<N>/ with the design's build sheet."""
    design = front.iloc[[row]][list(DESIGN_COLUMNS)].reset_index(drop=True)
    trace = {"run folder": str(Path(run_dir).resolve()), "front row": row, **(trace or {})}
    return write_sheet(Path(run_dir) / "picks" / f"row{row:03d}", ctx, design, _title(design, f"front row {row}"),
                       trace)


def write_typed_sheet(spec_path, design_path, out, extra_catalogs=()) -> Pick:
    """The build sheet of a design typed in by hand (TOML, or a one-row CSV), against SPEC."""
    spec, spec_hash, catalog = load_problem(spec_path, extra_catalogs)
    table = read_design_table(design_path)
    resolve_designs(table, catalog, source=str(design_path))
    if len(table) != 1:
        raise InputError(f"{design_path}: a build sheet is for one design; the file holds {len(table)} rows")
    design = table.assign(**{c: v for c, v in (("gaps", "1"),) if c not in table})[list(DESIGN_COLUMNS)]
    design = resolve_designs(design, catalog).to_frame(catalog)
    trace = {"spec": str(Path(spec_path).resolve()), "spec hash (SHA-256)": spec_hash,
             "design": f"typed in ({Path(design_path).name})"}
    return write_sheet(Path(out), prepare(spec, catalog), design, _title(design, "typed-in design"), trace)
