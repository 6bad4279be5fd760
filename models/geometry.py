"""Core geometry from principal dimensions.

Every function takes dimensions in metres as numpy arrays (or scalars) and returns arrays; a
whole catalog of one family, or one size stacked 1-3 times, is computed in one call.

The magnetic path of each family is cut into segments of length ``l_i`` and cross-section
``A_i``; the IEC 60205 effective parameters follow from ``C1 = sum l_i/A_i`` and
``C2 = sum l_i/A_i^2``.  Corners are quarter arcs on the mean of the adjoining mid-lines with the
mean of the adjoining sections, a simplification of the standard's corner terms; chamfers and
rounded edges of real cores are ignored, so computed sections run a few per cent above listed
values.

References
----------
IEC 60205:2016, Calculation of the effective parameters of magnetic piece parts.
IEC 62317 (series), Ferrite cores - Dimensions.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np


def effective_parameters(lengths, areas):
    """IEC 60205 effective length, area and volume of a segmented magnetic path.

    Parameters
    ----------
    lengths : array [m], segments on the last axis
    areas : array [m2], same shape as ``lengths``

    Returns
    -------
    le : array [m]
    ae : array [m2]
    ve : array [m3]

    Notes
    -----
    ``C1 = sum l/A``, ``C2 = sum l/A^2``; ``le = C1^2/C2``, ``Ae = C1/C2``, ``Ve = C1^3/C2^2``.

    References
    ----------
    IEC 60205:2016, clause 4 (core constants).
    """
    lengths = np.asarray(lengths, dtype=float)
    areas = np.asarray(areas, dtype=float)
    if np.any(areas <= 0) or np.any(lengths < 0):
        raise ValueError("segment areas must be positive and lengths non-negative")
    c1 = np.sum(lengths / areas, axis=-1)
    c2 = np.sum(lengths / areas**2, axis=-1)
    return c1**2 / c2, c1 / c2, c1**3 / c2**2


def ring_core_constants(r1, r2, h):
    """Core constants C1, C2 of a ring core of rectangular section.

    Parameters
    ----------
    r1, r2 : array [m]  inner and outer radius, ``r2 > r1 > 0``
    h : array [m]       height

    Returns
    -------
    c1 : array [1/m]
    c2 : array [1/m3]

    Notes
    -----
    ``C1 = 2 pi / (h ln(r2/r1))``, ``C2 = 2 pi (1/r1 - 1/r2) / (h^2 ln^3(r2/r1))``: the exact
    integrals over concentric flux tubes.

    References
    ----------
    IEC 60205:2016, ring cores of rectangular cross-section.
    """
    r1, r2, h = (np.asarray(x, dtype=float) for x in (r1, r2, h))
    if np.any(r1 <= 0) or np.any(r2 <= r1) or np.any(h <= 0):
        raise ValueError("ring core needs r2 > r1 > 0 and h > 0")
    ln = np.log(r2 / r1)
    return 2 * np.pi / (h * ln), 2 * np.pi * (1 / r1 - 1 / r2) / (h**2 * ln**3)


def ring_core_effective(r1, r2, h):
    """Effective length, area, volume of a ring core [m, m2, m3] (IEC 60205); see ring_core_constants."""
    c1, c2 = ring_core_constants(r1, r2, h)
    return c1**2 / c2, c1 / c2, c1**3 / c2**2


def _circle_in_band_area(radius, half_band):
    """Area of a circle of ``radius`` inside the band |y| <= half_band [m2]."""
    h = np.minimum(half_band, radius)
    return 2 * (h * np.sqrt(radius**2 - h**2) + radius**2 * np.arcsin(h / radius))


def _e_like_segments(a, b, c, d, e, f, outer_area, centre_area):
    """Segments of a pair of E-type halves (flux splits into two parallel outer branches)."""
    yoke = 2 * (b - d) * c
    r_outer = 0.5 * ((a - e) / 4 + (b - d) / 2)
    r_inner = 0.5 * (f / 4 + (b - d) / 2)
    lengths = np.stack([2 * d, e - f, 2 * d, np.pi * r_outer, np.pi * r_inner], axis=-1)
    areas = np.stack([outer_area, yoke, centre_area,
                      0.5 * (outer_area + yoke), 0.5 * (yoke + centre_area)], axis=-1)
    return lengths, areas


@dataclass(frozen=True)
class CoreGeometry:
    """Derived geometry of one core set (arrays over sizes and stack counts), SI units.

    ``mlt(t) = leg_perimeter + 2 pi (bobbin_wall + t)`` is the length of a turn whose centre lies
    ``t`` above the bobbin wall; the boxed size of the finished part along each axis is
    ``max(core_size, coil_size_0 + coil_growth * build)``.
    """

    le: np.ndarray              # effective magnetic path length [m]
    ae: np.ndarray              # effective cross-section [m2]
    ve: np.ndarray              # effective volume [m3]
    a_min: np.ndarray           # smallest cross-section along the path [m2]
    gap_area: np.ndarray        # section of the leg that carries a discrete gap [m2]
    window_area: np.ndarray     # gross window area [m2] (ring: area of the hole)
    window_breadth: np.ndarray  # usable length along the leg for one layer, per coil [m]
    window_height: np.ndarray   # usable radial build per coil [m]
    gap_window_height: np.ndarray  # window extent along the leg that sets the fringing [m]
    leg_perimeter: np.ndarray   # perimeter of the wound leg's section [m]
    bobbin_wall: np.ndarray     # [m]
    core_box: np.ndarray        # (..., 3) core outline width, height, depth [m]
    coil_box0: np.ndarray       # (..., 3) coil outline at zero build [m]
    coil_growth: np.ndarray     # (..., 3) growth of the coil outline per metre of build [-]


def _e_like_geometry(a, b, d, e, f, depth, outer, centre, perimeter, coil_depth, wall) -> "CoreGeometry":
    """Geometry shared by the E-type pairs: path segments, window, outline (see e_pair, pq_pair)."""
    lengths, areas = _e_like_segments(a, b, depth, d, e, f, outer, centre)
    le, ae, ve = effective_parameters(lengths, areas)
    return CoreGeometry(
        le=le, ae=ae, ve=ve, a_min=np.min(areas, axis=-1), gap_area=centre,
        window_area=2 * d * (e - f) / 2,
        window_breadth=2 * d - 2 * wall, window_height=(e - f) / 2 - wall,
        gap_window_height=2 * d, leg_perimeter=perimeter, bobbin_wall=wall,
        core_box=np.stack([a, 2 * b, depth], axis=-1),
        coil_box0=np.stack([f + 2 * wall, np.zeros_like(a), coil_depth + 2 * wall], axis=-1),
        coil_growth=np.stack([np.full_like(a, 2.0), np.zeros_like(a), np.full_like(a, 2.0)], axis=-1),
    )


def e_pair(a, b, c, d, e, f, stack, bobbin_wall, round_leg=False):
    """Geometry of a pair of E (rectangular leg) or ETD (round leg) halves.

    Parameters
    ----------
    a, b, c, d, e, f : array [m]  overall width, half height, depth, half window height,
        window span, centre-leg width (E) or diameter (ETD)
    stack : array [-]  identical cores side by side along the depth
    bobbin_wall : array [m]
    round_leg : bool  centre leg round (ETD) instead of rectangular (E)

    Returns
    -------
    CoreGeometry
    """
    a, b, c, d, e, f, stack, wall = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (a, b, c, d, e, f, stack, bobbin_wall)))
    depth = c * stack
    if round_leg:
        centre = stack * np.pi * f**2 / 4
        perimeter = np.pi * f + 2 * (stack - 1) * c
    else:
        centre = f * depth
        perimeter = 2 * (f + depth)
    return _e_like_geometry(a, b, d, e, f, depth, (a - e) * depth, centre, perimeter, depth, wall)


def pq_pair(a, b, c, d, e, f, stack, bobbin_wall):
    """Geometry of a pair of PQ halves: round centre leg, outer legs bounded by a round window.

    The outer-leg section is the core outline ``a x c`` less the part of the window circle
    (diameter ``e``) that lies within the depth ``c``.  Only one core (stack = 1) is physical.
    """
    a, b, c, d, e, f, stack, wall = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (a, b, c, d, e, f, stack, bobbin_wall)))
    outer = a * c - _circle_in_band_area(e / 2, c / 2)
    return _e_like_geometry(a, b, d, e, f, c, outer, np.pi * f**2 / 4, np.pi * f, f, wall)


def ring(od, id_, h, stack, bobbin_wall):
    """Geometry of a ring core (toroid), ``stack`` rings piled along the axis.

    The winding breadth of one layer is the inner circumference at the bobbin wall; the radial
    room is the hole's radius less the wall (the centre must stay free for the winding tool, which
    the fill limit accounts for).
    """
    od, id_, h, stack, wall = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (od, id_, h, stack, bobbin_wall)))
    height = h * stack
    le, ae, ve = ring_core_effective(id_ / 2, od / 2, height)
    radial = (od - id_) / 2
    return CoreGeometry(
        le=le, ae=ae, ve=ve, a_min=radial * height, gap_area=radial * height,
        window_area=np.pi * (id_ / 2) ** 2,
        window_breadth=np.pi * (id_ - 2 * wall), window_height=id_ / 2 - wall,
        gap_window_height=height, leg_perimeter=2 * (radial + height), bobbin_wall=wall,
        core_box=np.stack([od, od, height], axis=-1),
        coil_box0=np.stack([od + 2 * wall, od + 2 * wall, height + 2 * wall], axis=-1),
        coil_growth=np.full(od.shape + (3,), 2.0),
    )


def cut_core_pair(a, b, c, d, stack, bobbin_wall):
    """Geometry of a tape-wound cut core (U-U pair), one coil on each leg.

    The path runs along the mid-line of a rectangle: two legs of length ``d``, two yokes of
    length ``c``, four quarter arcs of radius ``a/2``; the section ``a x b`` is constant.
    Window breadth and radial room are per coil (half the window width each).
    """
    a, b, c, d, stack, wall = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (a, b, c, d, stack, bobbin_wall)))
    depth = b * stack
    area = a * depth
    le = 2 * (c + d) + np.pi * a
    return CoreGeometry(
        le=le, ae=area, ve=le * area, a_min=area, gap_area=area,
        window_area=c * d,
        window_breadth=d - 2 * wall, window_height=c / 2 - wall,
        gap_window_height=d, leg_perimeter=2 * (a + depth), bobbin_wall=wall,
        core_box=np.stack([c + 2 * a, d + 2 * a, depth], axis=-1),
        coil_box0=np.stack([c + 2 * a + 2 * wall, np.zeros_like(a), depth + 2 * wall], axis=-1),
        coil_growth=np.stack([np.full_like(a, 2.0), np.zeros_like(a), np.full_like(a, 2.0)], axis=-1),
    )


def mean_turn_length(geometry: CoreGeometry, build):
    """Mean length of a turn whose centre lies ``build`` [m] above the bobbin wall [m].

    Notes
    -----
    ``MLT = P_leg + 2 pi (wall + build)``: the perimeter of the leg section offset outward by a
    constant distance (rounded-rectangle offset).  For a whole winding of total build ``t``, the
    mean over its layers is ``MLT(t/2)`` since the expression is linear in build.
    """
    return geometry.leg_perimeter + 2 * np.pi * (geometry.bobbin_wall + np.asarray(build, dtype=float))


def boxed_size(geometry: CoreGeometry, build):
    """Outline of the finished inductor (core and winding) width, height, depth [m], shape (..., 3)."""
    build = np.asarray(build, dtype=float)[..., None]
    return np.maximum(geometry.core_box, geometry.coil_box0 + geometry.coil_growth * build)


def box_volume_and_surface(size):
    """Volume [m3] and outer surface [m2] of a box of edges ``size`` (..., 3) [m]."""
    w, h, d = size[..., 0], size[..., 1], size[..., 2]
    return w * h * d, 2 * (w * h + w * d + h * d)


# Family name -> (function, dimension letters it takes, in order).  Adding a shape family means
# adding its function here and its letters in catalog/data/shapes.toml.
FAMILIES = {
    "E": (lambda dims, stack, wall: e_pair(*dims, stack, wall, round_leg=False), ("a", "b", "c", "d", "e", "f")),
    "ETD": (lambda dims, stack, wall: e_pair(*dims, stack, wall, round_leg=True), ("a", "b", "c", "d", "e", "f")),
    "PQ": (lambda dims, stack, wall: pq_pair(*dims, stack, wall), ("a", "b", "c", "d", "e", "f")),
    "T": (lambda dims, stack, wall: ring(*dims, stack, wall), ("od", "id", "h")),
    "C": (lambda dims, stack, wall: cut_core_pair(*dims, stack, wall), ("a", "b", "c", "d")),
}


def family_geometry(family, dims_m, stack, bobbin_wall):
    """Geometry of ``family`` from its dimension arrays (dict letter -> array [m]).

    Raises ValueError naming the valid families for an unknown one.
    """
    if family not in FAMILIES:
        raise ValueError(f"unknown shape family {family!r}; expected one of {sorted(FAMILIES)}")
    func, letters = FAMILIES[family]
    return func(tuple(np.asarray(dims_m[k], dtype=float) for k in letters), stack, bobbin_wall)
