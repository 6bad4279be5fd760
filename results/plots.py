"""Figures of a run: the front, its pairwise panels, frequency along the front, progress; the flux map.

Every function returns a matplotlib Figure; ``save`` writes it as PNG and SVG.  The non-interactive
Agg backend is used so that plots work on machines without a screen.
"""
from __future__ import annotations

import io
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402

from fluxfront.catalog.fitting import predict  # noqa: E402
from fluxfront.files import write_atomic  # noqa: E402
from fluxfront.models.magnetics import powder_permeability_fraction  # noqa: E402

AXIS = {"volume_cm3": "boxed volume [cm³]", "total_loss_w": "inductor loss, weighted [W]", "cost": "cost [{currency}]",
        "f_sw_khz": "switching frequency [kHz]"}
# One colour per material class, the same in every run and figure; classes not listed get the greys.
CLASS_COLOURS = {
    "MnZn power ferrite": "#1f77b4", "Fe-based amorphous": "#8c564b", "nanocrystalline": "#9467bd",
    "Fe-Si-Al powder": "#2ca02c", "Fe-Ni powder": "#ff7f0e", "MoNi powder": "#17becf", "iron powder": "#7f7f7f",
    "Fe-Si powder": "#bcbd22",
}
OTHER_COLOURS = ("#4d4d4d", "#999999", "#c7c7c7", "#6b6b6b")
KNEE_MARKER = dict(marker="*", s=320, facecolor="none", edgecolor="black", linewidth=1.6)   # no class uses it
FREQUENCY_TICKS_KHZ = (20, 30, 50, 100, 200, 300, 500, 1000)
STYLE = {"figure.dpi": 110, "savefig.dpi": 150, "font.size": 10, "axes.grid": True, "grid.alpha": 0.3,
         "axes.spines.top": False, "axes.spines.right": False}


def save(fig, folder, name: str) -> list[Path]:
    """Write ``fig`` to ``folder/name.png`` and ``.svg`` (atomically); returns the paths."""
    folder = Path(folder)
    paths = []
    for ext in ("png", "svg"):
        buf = io.BytesIO()
        fig.savefig(buf, format=ext, bbox_inches="tight")
        paths.append(write_atomic(folder / f"{name}.{ext}", buf.getvalue()))
    plt.close(fig)
    return paths


def plain(text) -> str:
    """Catalog or spec text as matplotlib must show it: '$' would start math mode."""
    return str(text).replace("$", r"\$")


def _classes(front: pd.DataFrame, catalog) -> pd.Series:
    return front["material"].map(lambda m: plain(catalog.materials[m].class_ if m in catalog.materials else m))


def _colours(labels) -> dict:
    """Fixed colours by material class (CLASS_COLOURS); a class of the user's own gets a grey."""
    others = iter(OTHER_COLOURS * 10)
    return {lab: CLASS_COLOURS.get(lab) or next(others) for lab in sorted(set(labels))}


def _khz_axis(ax) -> None:
    """A logarithmic frequency axis labelled in plain kHz (30, 50, 100, 200, ...)."""
    ax.set_xscale("log")
    lo, hi = ax.get_xlim()
    ticks = [t for t in FREQUENCY_TICKS_KHZ if lo <= t <= hi]
    if ticks:
        ax.set_xticks(ticks, [f"{t:g}" for t in ticks])
    ax.xaxis.set_minor_formatter(matplotlib.ticker.NullFormatter())


def axis_label(key: str, currency: str = "currency units") -> str:
    return AXIS[key].format(currency=currency)


def _cost_sizes(cost: pd.Series) -> np.ndarray:
    lo, hi = cost.min(), cost.max()
    return 20 + 180 * (cost - lo) / (hi - lo if hi > lo else 1)


def front_volume_loss(front: pd.DataFrame, catalog, knee: int | None = None):
    """Volume against loss, colour = material class, marker area = cost."""
    with plt.rc_context(STYLE):
        fig, ax = plt.subplots(figsize=(7.5, 5))
        classes = _classes(front, catalog)
        colours = _colours(classes)
        sizes = _cost_sizes(front["cost"])
        for cls in sorted(set(classes)):
            sel = classes == cls
            ax.scatter(front.loc[sel, "volume_cm3"], front.loc[sel, "total_loss_w"], s=sizes[sel], color=colours[cls],
                       alpha=0.75, edgecolor="black", linewidth=0.4, label=cls)
        if knee is not None:
            ax.scatter(front["volume_cm3"].iloc[knee], front["total_loss_w"].iloc[knee], label="balanced (knee)",
                       **KNEE_MARKER)
        ax.set_xlabel(AXIS["volume_cm3"])
        ax.set_ylabel(AXIS["total_loss_w"])
        ax.set_title("Pareto front: size against loss (marker area: cost)")
        first = ax.legend(title="material class", loc="upper right", fontsize=8)
        for handle in first.legend_handles:     # class legend with equal markers; size is the cost legend's job
            handle.set_sizes([40])
        ax.add_artist(first)
        lo, hi = front["cost"].min(), front["cost"].max()
        handles = [ax.scatter([], [], s=s, color="grey", alpha=0.5) for s in (20, 110, 200)]
        ax.legend(handles, [f"{v:.1f}" for v in (lo, (lo + hi) / 2, hi)], title=f"cost [{plain(catalog.costs.currency)}]",
                  loc="lower left", fontsize=8)
        return fig


def pairwise(front: pd.DataFrame, catalog):
    """The three pairwise objective panels."""
    pairs = (("volume_cm3", "total_loss_w"), ("volume_cm3", "cost"), ("total_loss_w", "cost"))
    with plt.rc_context(STYLE):
        fig, axes = plt.subplots(1, 3, figsize=(14, 4.3))
        classes = _classes(front, catalog)
        colours = _colours(classes)
        for ax, (x, y) in zip(axes, pairs):
            for cls in sorted(set(classes)):
                sel = classes == cls
                ax.scatter(front.loc[sel, x], front.loc[sel, y], s=18, color=colours[cls], label=cls, alpha=0.8)
            ax.set_xlabel(axis_label(x, catalog.costs.currency))
            ax.set_ylabel(axis_label(y, catalog.costs.currency))
        axes[0].legend(fontsize=7, title="material class")
        fig.suptitle("Pareto front, objectives in pairs")
        fig.tight_layout()
        return fig


def frequency_along_front(front: pd.DataFrame, catalog):
    """Switching frequency against total loss for the front's designs."""
    with plt.rc_context(STYLE):
        fig, ax = plt.subplots(figsize=(7, 4.5))
        classes = _classes(front, catalog)
        colours = _colours(classes)
        for cls in sorted(set(classes)):
            sel = classes == cls
            ax.scatter(front.loc[sel, "f_sw_khz"], front.loc[sel, "total_loss_w"], s=22, color=colours[cls], label=cls)
        _khz_axis(ax)
        ax.set_xlabel(AXIS["f_sw_khz"])
        ax.set_ylabel(AXIS["total_loss_w"])
        ax.set_title("Switching frequency chosen along the front")
        ax.legend(fontsize=8, title="material class")
        return fig


def progress(history: pd.DataFrame):
    """Hypervolume and front size against generation."""
    with plt.rc_context(STYLE):
        fig, ax = plt.subplots(figsize=(7, 4.2))
        ax.plot(history["generation"], history["hypervolume"], color="tab:blue")
        ax.set_xlabel("generation")
        ax.set_ylabel("hypervolume [fraction of the reference box]", color="tab:blue")
        ax2 = ax.twinx()
        ax2.plot(history["generation"], history["front_size"], color="tab:orange")
        ax2.set_ylabel("designs on the front", color="tab:orange")
        ax2.grid(False)
        ax.set_title("Search progress")
        return fig


def flux_map_figure(curves: pd.DataFrame, summary: pd.DataFrame):
    """Small multiples, one panel per material class: loss-limited ripple amplitude against frequency
    for each loss density (line styles), the saturation-allowed amplitude (thin line), crossovers (dots)."""
    styles = ["-", "--", ":", "-."]
    classes = sorted(curves["class"].unique())
    densities = sorted(curves["loss_density_mw_cm3"].unique())
    cols = min(3, len(classes))
    rows = int(np.ceil(len(classes) / cols))
    with plt.rc_context(STYLE):
        fig, axes = plt.subplots(rows, cols, figsize=(4.2 * cols, 3.4 * rows), squeeze=False, sharey=True)
        shades = iter(OTHER_COLOURS * 10)
        for ax, cls in zip(axes.flat, classes):
            members = curves[curves["class"] == cls]
            for k, (mat, grp) in enumerate(members.groupby("material", sort=True)):
                colour = CLASS_COLOURS.get(cls, next(shades)) if k == 0 else next(shades)
                for i, pv in enumerate(densities):
                    g = grp[grp["loss_density_mw_cm3"] == pv]
                    ax.plot(g["f_khz"], g["b_loss_mt"], styles[i % 4], color=colour,
                            label=plain(mat) if i == 0 else None)
                ax.axhline(grp["b_saturation_mt"].iloc[0], color=colour, linewidth=0.8, alpha=0.6)
                for _, r in summary[summary["material"] == mat].iterrows():
                    if np.isfinite(r["crossover_khz"]):
                        ax.plot(r["crossover_khz"], r["b_saturation_mt"], "o", color=colour, markersize=5)
            ax.set_yscale("log")
            _khz_axis(ax)
            ax.set_title(plain(cls), fontsize=9)
            ax.set_xlabel(AXIS["f_sw_khz"], fontsize=8)
            ax.legend(fontsize=6, loc="lower left")
        for ax in axes.flat[len(classes):]:
            ax.set_visible(False)
        axes[0, 0].set_ylabel("ripple flux amplitude [mT]")
        dens = ", ".join(f"'{styles[i % 4]}' {pv:g} mW/cm³" for i, pv in enumerate(densities))
        fig.suptitle(f"Ripple flux each material affords: loss limit ({dens}); thin line: saturation; dot: crossover",
                     fontsize=9)
        fig.tight_layout()
        return fig


def compare_fronts(fronts: dict[str, pd.DataFrame]):
    """Fronts of several runs overlaid, volume against loss."""
    with plt.rc_context(STYLE):
        fig, ax = plt.subplots(figsize=(7.5, 5))
        for name, front in fronts.items():
            f = front.sort_values("volume_cm3")
            ax.plot(f["volume_cm3"], f["total_loss_w"], "o", markersize=4, alpha=0.8, label=plain(name))
        ax.set_xlabel(AXIS["volume_cm3"])
        ax.set_ylabel(AXIS["total_loss_w"])
        ax.set_title("Pareto fronts of several runs")
        ax.legend(fontsize=8)
        return fig


def line_cycle(samples: dict, op_name: str, b_limit: float):
    """Current with ripple envelope, flux density with the saturation limit, loss density, over the line cycle."""
    ang = np.asarray(samples["angle_deg"])
    half = np.concatenate([ang, 180 - ang[::-1]])          # the stored quarter cycle mirrored to a half cycle

    def mirror(v):
        v = np.asarray(v)
        return np.concatenate([v, v[::-1]])

    with plt.rc_context(STYLE):
        fig, axes = plt.subplots(3, 1, figsize=(7, 7.5), sharex=True)
        i_avg, rip = mirror(samples["i_avg_a"]), mirror(samples["ripple_pp_a"])
        axes[0].fill_between(half, i_avg - rip / 2, i_avg + rip / 2, alpha=0.3, label="ripple envelope")
        axes[0].plot(half, i_avg, label="switching-period average")
        axes[0].set_ylabel("inductor current [A]")
        axes[0].legend(fontsize=8)
        axes[1].plot(half, mirror(samples["b_avg_t"]), label="at average current")
        axes[1].plot(half, mirror(samples["b_top_t"]), label="at the ripple's top")
        axes[1].axhline(b_limit, color="red", linestyle="--", label="saturation x margin at temperature")
        axes[1].set_ylabel("flux density [T]")
        axes[1].legend(fontsize=8)
        axes[2].plot(half, mirror(samples["core_loss_density_w_cm3_at_ref"]) * 1e3)
        axes[2].set_ylabel("core loss density\n[mW/cm³, ref. temp.]")
        axes[2].set_xlabel("line angle [degrees]")
        fig.suptitle(f"Over the half line cycle: {op_name}")
        fig.tight_layout()
        return fig


def inductance_curve(current_a, inductance_uh, i_peak: float):
    """Inductance against DC current, with the design's peak current marked."""
    with plt.rc_context(STYLE):
        fig, ax = plt.subplots(figsize=(6.5, 4))
        ax.plot(current_a, inductance_uh)
        ax.axvline(i_peak, color="red", linestyle="--", label=f"peak current {i_peak:.1f} A")
        ax.set_xlabel("DC current [A]")
        ax.set_ylabel("incremental inductance [µH]")
        ax.set_ylim(bottom=0)
        ax.legend(fontsize=8)
        ax.set_title("Inductance against current")
        return fig


def loss_fit(points: dict, fit):
    """Measured loss density against the fitted bands, per temperature (log-log)."""
    with plt.rc_context(STYLE):
        fig, ax = plt.subplots(figsize=(7, 4.5))
        t = points.get("t", np.full(len(points["f"]), fit.t_ref))
        model = predict(fit.bands, points["f"], points["b"]) * (1 + fit.c1 * (t - fit.t_ref)
                                                                 + fit.c2 * (t - fit.t_ref) ** 2)
        for temp in np.unique(t):
            sel = t == temp
            ax.loglog(points["pv"][sel] * 1e-3, model[sel] * 1e-3, "o", label=f"{temp:g} C")
        lo, hi = points["pv"].min() * 1e-3, points["pv"].max() * 1e-3
        ax.plot([lo, hi], [lo, hi], "k--", linewidth=1, label="fit = data")
        ax.set_xlabel("measured loss density [kW/m³]")
        ax.set_ylabel("fitted loss density [kW/m³]")
        ax.legend(fontsize=8)
        fig.tight_layout()
    return fig


def rolloff_fit(points: dict, coefficients):
    """Measured permeability fraction against DC field, with the fitted curve."""
    with plt.rc_context(STYLE):
        fig, ax = plt.subplots(figsize=(7, 4.5))
        h = np.sort(points["h"])
        grid = np.geomspace(h.min(), h.max(), 200)
        ax.semilogx(points["h"], points["fraction"], "o", label="data")
        ax.semilogx(grid, powder_permeability_fraction(grid, *coefficients), "-", label="fit")
        ax.set_xlabel("DC field [A/m]")
        ax.set_ylabel("permeability / initial permeability")
        ax.legend()
        fig.tight_layout()
    return fig
