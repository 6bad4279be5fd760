"""Stage 1, the build: core geometry, winding layout, copper and the finished part's outline.

Nothing here depends on currents or frequency: it is what a drawing of the part would show.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fluxfront.models import geometry, winding
from fluxfront.models.geometry import CoreGeometry

from .context import Context
from .designs import Designs


@dataclass(frozen=True)
class Build:
    """Geometry and winding of each design (arrays of length n, SI units)."""

    geo: CoreGeometry
    ae: np.ndarray              # magnetic section, stacking factor applied [m2]
    ve: np.ndarray              # magnetic volume, stacking factor applied [m3]
    ring: np.ndarray            # wound on a ring core (bool)
    keepout: np.ndarray         # extra distance of the first layer from a gapped leg [m]
    depth: np.ndarray           # radial build of the winding (layers x wire) [m]
    turns_per_layer: np.ndarray
    layers: np.ndarray          # kept finite where the winding cannot be laid
    laid: np.ndarray            # the winding can be laid at all (bool)
    fit: np.ndarray             # build / room (> 1 does not fit)
    fill: np.ndarray            # copper area / window area
    wire_length: np.ndarray     # of each parallel wire [m]
    r_dc20: np.ndarray          # DC resistance at 20 C [ohm]
    copper_mass: np.ndarray     # [kg]
    size: np.ndarray            # (n, 3) boxed outline [m]
    volume: np.ndarray          # boxed volume [m3]
    surface: np.ndarray         # boxed surface [m2]


def _layout(ctx: Context, d: Designs, geo: CoreGeometry, wire_outer):
    """Turns per layer, layers, build and fit: bobbin layers, or ring layers on ring cores."""
    S = ctx.catalog.shape_arrays
    N, par = d.turns.astype(float), d.parallel.astype(float)
    legs = S["winding_legs"][d.shape]
    tpl, layers, build, fit = winding.bobbin_layout(N, par, wire_outer, geo.window_breadth, geo.window_height, legs)
    ring = S["family"][d.shape] == "T"
    if ring.any():
        hole = 2 * (geo.window_height[ring] + geo.bobbin_wall[ring])
        r = winding.ring_layout(N[ring], par[ring], wire_outer[ring], hole, geo.bobbin_wall[ring])
        tpl[ring], layers[ring], build[ring], fit[ring] = r
    return ring, tpl, layers, fit


def build(ctx: Context, d: Designs) -> Build:
    """Core geometry with stacking, winding layout, resistance, copper mass and the boxed outline.

    A winding around a leg with a discrete gap starts ``construction.gap_keepout_mm`` further out:
    the keep-out takes radial room, lengthens the turns and enlarges the outline.
    """
    cat = ctx.catalog
    M, W = cat.material_arrays, cat.wire_arrays
    N, par = d.turns.astype(float), d.parallel.astype(float)
    geo = cat.core_geometry(d.shape, d.stack)
    sf = M.stacking_factor[d.material]
    od, a_cu = W["outer_diameter"][d.wire], W["copper_area"][d.wire]
    gapped_leg = ~M.distributed_gap[d.material] & (cat.shape_arrays["gap_legs"][d.shape] > 0)
    keepout = np.where(gapped_leg, ctx.spec.construction.gap_keepout_mm * 1e-3, 0.0)
    ring, tpl, layers, fit = _layout(ctx, d, geo, od)
    laid = np.isfinite(layers)
    legs = cat.shape_arrays["winding_legs"][d.shape]
    layers = np.where(laid, layers, np.ceil(N / legs))     # keep numbers finite where it cannot be laid
    depth = layers * od
    fit = np.where(laid, fit + keepout / geo.window_height, fit)
    mlt = geometry.mean_turn_length(geo, keepout + depth / 2)
    wire_length = N * mlt
    size = geometry.boxed_size(geo, keepout + depth)
    volume, surface = geometry.box_volume_and_surface(size)
    return Build(
        geo=geo, ae=geo.ae * sf, ve=geo.ve * sf, ring=ring, keepout=keepout, depth=depth, turns_per_layer=tpl,
        layers=layers, laid=laid, fit=fit,
        fill=N * par * a_cu / geo.window_area, wire_length=wire_length,
        r_dc20=cat.copper.resistivity_ohm_m_20c * wire_length / (par * a_cu),
        copper_mass=cat.copper.density_kg_m3 * a_cu * par * wire_length,
        size=size, volume=volume, surface=surface)
