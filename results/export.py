"""A picked design for circuit simulation: tables and a subcircuit written beside its build sheet.

* ``inductance_vs_current.csv``: incremental inductance against DC current (powder: the roll-off;
  gapped: flat up to the current that reaches saturation at the narrowest section, where the
  table ends: the model does not describe the saturated core);
* ``ac_resistance_vs_frequency.csv``: winding resistance against frequency at the worst operating
  point's winding temperature (DC and AC factor; the gaps' fringing loss is not a resistance and is
  listed in the sheet);
* ``core_loss.csv``: core loss per operating point and the parallel resistance that dissipates it
  at the inductor's RMS voltage over the line cycle;
* ``inductor.cir``: a subcircuit ``.subckt ... .ends`` with the series resistance and a
  current-dependent inductance written as flux linkage against current (a piecewise-linear table)
  whose derivative is the voltage -- behavioural-source syntax of the common open SPICE engines.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from fluxfront.design.build import build
from fluxfront.design.circuit import circuit
from fluxfront.design.context import Context
from fluxfront.design.designs import Designs
from fluxfront.design.evaluator import Evaluation
from fluxfront.design.heat import resistance_factor, winding_shape
from fluxfront.files import write_atomic

POINTS = 41


def inductance_table(ctx: Context, d: Designs, ev: Evaluation) -> pd.DataFrame:
    """Incremental inductance [uH] against DC current [A], from zero to the current limit (or saturation)."""
    b = build(ctx, d)
    c = circuit(ctx, d, b)
    i_top = float(ev.figures["current_limit_a"][0])
    if not c.distributed[0]:
        b_sat = float(ev.figures["b_sat_t"][0])
        per_amp = float(c.flux_density(np.array([1.0]))[0] * c.section_ratio[0])
        i_top = min(i_top, b_sat / per_amp)
    current = np.linspace(0.0, i_top, POINTS)
    frac = c.kept_fraction(np.broadcast_to(current, (1, POINTS)))[0]
    return pd.DataFrame({"current_a": current, "inductance_uh": c.l0[0] * frac * 1e6})


def resistance_table(ctx: Context, d: Designs, ev: Evaluation) -> pd.DataFrame:
    """Winding resistance [mOhm] from DC to 40 harmonics of the switching frequency, at the winding's temperature."""
    b = build(ctx, d)
    t = float(ev.figures["winding_temperature_c"][0])
    freqs = np.concatenate([[0.0], d.f_sw[0] * np.arange(1, 41)])
    fr, rho, _ = resistance_factor(ctx, winding_shape(ctx, d, b), np.maximum(freqs, 1.0)[None, :], t)
    r_dc = b.r_dc20[0] * rho / ctx.catalog.copper.resistivity_ohm_m_20c
    return pd.DataFrame({"frequency_hz": freqs, "resistance_mohm": r_dc * fr[0] * 1e3, "temperature_c": t})


def core_loss_table(ctx: Context, ev: Evaluation) -> pd.DataFrame:
    """Core loss per operating point and the parallel resistance that dissipates it."""
    rows = []
    bus = ctx.spec.converter.bus_v
    for j, op in enumerate(ctx.ops):
        # inductor voltage: v_in while the switch conducts, v_in - V_bus while the diode does
        v2 = float(np.mean(op.duty * op.v_in**2 + (1 - op.duty) * (op.v_in - bus) ** 2))
        p = float(ev.per_op["core_loss_w"][0, j] + ev.per_op["core_gap_loss_w"][0, j])
        rows.append({"operating_point": op.name, "core_loss_w": p, "inductor_rms_voltage_v": np.sqrt(v2),
                     "parallel_resistance_ohm": v2 / p if p > 0 else np.inf})
    return pd.DataFrame(rows)


def subcircuit(name: str, l_table: pd.DataFrame, r_ohm: float, r_par_ohm: float) -> str:
    """The netlist text: series resistance, flux linkage psi(i) as a table, voltage d(psi)/dt."""
    i = l_table["current_a"].to_numpy()
    l_h = l_table["inductance_uh"].to_numpy() * 1e-6
    psi = np.concatenate([[0.0], np.cumsum(np.diff(i) * 0.5 * (l_h[1:] + l_h[:-1]))])
    currents = np.concatenate([-i[:0:-1], i])
    flux = np.concatenate([-psi[:0:-1], psi])
    pairs = ", ".join(f"{a:.6g}, {p:.6g}" for a, p in zip(currents, flux))
    lines = [f"* {name}: boost inductor, written by fluxfront (model data, verify on the bench)",
             "* pins: 1 2; flux linkage against current from the incremental-inductance table",
             f".subckt {name} 1 2", f"Rs 1 3 {r_ohm:.6g}", "Vsense 3 4 0",
             f"Bpsi 4 2 V = ddt(pwl(i(Vsense), {pairs}))",
             f"Rcore 4 2 {r_par_ohm:.6g}", f".ends {name}", ""]
    return "\n".join(lines)


def write_simulation_files(folder: Path, ctx: Context, d: Designs, ev: Evaluation) -> list[Path]:
    """Write the three tables and the subcircuit into ``folder``; returns the paths."""
    folder = Path(folder)
    lt = inductance_table(ctx, d, ev)
    rt = resistance_table(ctx, d, ev)
    ct = core_loss_table(ctx, ev)
    worst = ct.iloc[int(np.argmax(ct["core_loss_w"].to_numpy()))]
    paths = [write_atomic(folder / "inductance_vs_current.csv", lt.to_csv(index=False)),
             write_atomic(folder / "ac_resistance_vs_frequency.csv", rt.to_csv(index=False)),
             write_atomic(folder / "core_loss.csv", ct.to_csv(index=False)),
             write_atomic(folder / "inductor.cir", subcircuit("FLUXFRONT_L", lt, rt["resistance_mohm"].iloc[0] * 1e-3,
                                                             float(worst["parallel_resistance_ohm"])))]
    return paths
