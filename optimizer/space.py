"""The design space of a spec: what the search may choose, encoded as a vector of numbers.

Encoding (one row of X per design, all real numbers, rounded by ``decode``):

====  ===================  ===================================================================
 x    meaning              decoding
====  ===================  ===================================================================
 0    core choice          index into the list of allowed (material, shape) pairs, ordered by
                           material then core volume, so neighbouring indices are similar cores
 1    stack                1..stack_max, clipped to the shape family's own maximum
 2    turns                turns_min..turns_max
 3    gap                  gap_mm_min..gap_mm_max [mm] in steps of gap_mm_step; forced to 0 for
                           distributed-gap materials
 4    wire                 index into the allowed wires, ordered by copper area
 5    parallel             1..parallel_max
 6    frequency            log10 of f_sw in Hz between the spec's limits (searched on a log
                           scale, rounded to f_sw_khz_step)
 7    gaps                 1..gaps_max discrete gaps per gapped leg; forced to 1 for
                           distributed-gap materials
====  ===================  ===================================================================

The search runs one island per material (``island``): each island encodes only that material's
pairs, and its rows are mapped back to the whole space's numbering (``to_global``) for the archive.

Incompatible material-shape combinations cannot be encoded at all (the pair list holds only
compatible ones); a stack beyond the family's maximum and a gap on a powder core are repaired
in ``decode``.  So every decoded row is a valid design for the evaluator.
"""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from fluxfront.catalog import Catalog
from fluxfront.design.designs import Designs
from fluxfront.design.spec import Spec
from fluxfront.errors import InputError

N_VAR = 8


def _choose(requested: list[str], table: dict, kind: str) -> list[str]:
    if requested == ["all"]:
        return list(table)
    unknown = [r for r in requested if r not in table]
    if unknown:
        raise InputError(f"search.{kind}s: unknown {kind} {unknown[0]!r}; valid: all, {', '.join(table)}")
    return list(dict.fromkeys(requested))


@dataclass(frozen=True)
class DesignSpace:
    pair_material: np.ndarray  # catalog material index of each (material, shape) pair
    pair_shape: np.ndarray     # catalog shape index
    pair_max_stack: np.ndarray
    wires: np.ndarray          # catalog wire indices, by copper area
    lower: np.ndarray          # (N_VAR,) bounds of the encoded variables
    upper: np.ndarray
    distributed: np.ndarray    # per pair: material has a distributed gap
    gap_step_mm: float = 0.01
    f_step_hz: float = 100.0
    pair_global: np.ndarray | None = None  # island spaces: each pair's number in the whole space

    @classmethod
    def from_spec(cls, spec: Spec, catalog: Catalog) -> "DesignSpace":
        s = spec.search
        mats = _choose(s.materials, catalog.materials, "material")
        shapes = _choose(s.shapes, catalog.shapes, "shape")
        wires = _choose(s.wires, catalog.wires, "wire")
        vol = catalog.shape_table().set_index("id")["ve_cm3"]
        pairs = [(catalog.material_index(mname), catalog.shape_index(sname))
                 for mname in mats
                 for sname in sorted(shapes, key=lambda x: vol[x])
                 if catalog.shapes[sname].family in catalog.materials[mname].families]
        if not pairs:
            raise InputError("search: no allowed shape is made in any allowed material; "
                             "widen search.materials or search.shapes")
        pm, ps = (np.array(v) for v in zip(*pairs))
        w_idx = np.array(sorted((catalog.wire_index(w) for w in wires),
                                key=lambda i: catalog.wire_arrays["copper_area"][i]))
        lo = np.array([0, 1, s.turns_min, s.gap_mm_min, 0, 1, np.log10(s.f_sw_khz_min * 1e3), 1], dtype=float)
        hi = np.array([len(pairs) - 1, s.stack_max, s.turns_max, s.gap_mm_max, len(w_idx) - 1, s.parallel_max,
                       np.log10(s.f_sw_khz_max * 1e3), s.gaps_max], dtype=float)
        # integer variables span [k - 0.5, k + 0.5) so that every value is equally likely after rounding
        for i in (0, 1, 2, 4, 5, 7):
            lo[i] -= 0.499999
            hi[i] += 0.499999
        return cls(pm, ps, np.minimum(catalog.shape_arrays["max_stack"][ps], s.stack_max), w_idx, lo, hi,
                   catalog.material_arrays.distributed_gap[pm], s.gap_mm_step, s.f_sw_khz_step * 1e3)

    @property
    def size(self) -> float:
        """Number of distinct designs (gap and frequency counted at their steps; an upper bound)."""
        span = np.round(self.upper - self.lower)
        return float(span[0] * span[1] * span[2] * len(self.gap_values()) * span[4] * span[5] * len(self.f_values())
                     * span[7])

    def island(self, material_index: int, f_band_hz: tuple[float, float] | None = None) -> "DesignSpace":
        """The part of the space that uses one material (the search runs one island per material).

        ``f_band_hz`` narrows the frequency range to where the material's Steinmetz fits hold, so the
        search never rests its loss figures on an extrapolated fit (when the two ranges overlap).
        """
        keep = np.nonzero(self.pair_material == material_index)[0]
        if keep.size == 0:
            raise ValueError(f"material number {material_index} has no pair in this space")
        upper, lower = self.upper.copy(), self.lower.copy()
        upper[0] = keep.size - 1 + 0.499999
        if f_band_hz is not None:
            lo, hi = np.log10(f_band_hz[0]), np.log10(f_band_hz[1])
            if lo < upper[6] and hi > lower[6]:
                lower[6], upper[6] = max(lower[6], lo), min(upper[6], hi)
        return replace(self, pair_material=self.pair_material[keep], pair_shape=self.pair_shape[keep],
                       pair_max_stack=self.pair_max_stack[keep], distributed=self.distributed[keep], upper=upper,
                       lower=lower, pair_global=keep)

    @property
    def materials(self) -> list[int]:
        """Catalog numbers of the materials in the space, in pair order."""
        return list(dict.fromkeys(self.pair_material.tolist()))

    def to_global(self, x: np.ndarray) -> np.ndarray:
        """Encoded rows of an island expressed in the whole space's pair numbering."""
        if self.pair_global is None:
            return x
        out = np.array(x, dtype=float)
        out[:, 0] = self.pair_global[np.rint(out[:, 0]).astype(int)]
        return out

    def gap_values(self) -> np.ndarray:
        """Every gap the search can produce [mm]."""
        lo, hi = np.ceil(self.lower[3] / self.gap_step_mm - 1e-9), np.floor(self.upper[3] / self.gap_step_mm + 1e-9)
        return np.round(np.arange(lo, hi + 1) * self.gap_step_mm, 6)

    def f_values(self) -> np.ndarray:
        """Every switching frequency the search can produce [Hz]."""
        lo = np.ceil(10 ** self.lower[6] / self.f_step_hz - 1e-9)
        hi = np.floor(10 ** self.upper[6] / self.f_step_hz + 1e-9)
        return np.round(np.arange(lo, hi + 1) * self.f_step_hz, 3)

    def decode(self, x: np.ndarray) -> Designs:
        """Rows of encoded variables -> valid Designs (rounding and repair, see module doc)."""
        x = np.clip(np.atleast_2d(np.asarray(x, dtype=float)), self.lower, self.upper)
        pair = np.rint(x[:, 0]).astype(int)
        stack = np.minimum(np.rint(x[:, 1]).astype(int), self.pair_max_stack[pair])
        gap_mm = np.clip(np.round(np.round(x[:, 3] / self.gap_step_mm) * self.gap_step_mm, 6),
                         self.gap_values()[0], self.gap_values()[-1])
        gap = np.where(self.distributed[pair], 0.0, gap_mm) * 1e-3
        f_sw = np.clip(np.round(np.round(10 ** x[:, 6] / self.f_step_hz) * self.f_step_hz, 3),
                       self.f_values()[0], self.f_values()[-1])
        gaps = np.where(self.distributed[pair], 1.0, np.rint(x[:, 7]))
        return Designs(self.pair_material[pair], self.pair_shape[pair], stack, np.rint(x[:, 2]), gap,
                       self.wires[np.rint(x[:, 4]).astype(int)], np.rint(x[:, 5]), f_sw, gaps)

    def canonical(self, x: np.ndarray) -> np.ndarray:
        """The encoded point of the design that ``x`` decodes to (repairs applied, bounds kept)."""
        x = np.clip(np.atleast_2d(np.asarray(x, dtype=float)), self.lower, self.upper)
        d = self.decode(x)
        pair = np.rint(x[:, 0])
        gap = np.where(self.distributed[pair.astype(int)], self.lower[3], d.gap * 1e3)
        return np.column_stack([pair, d.stack, d.turns, gap, np.rint(x[:, 4]), d.parallel, np.log10(d.f_sw), d.gaps])

    def grid(self, gaps_mm=None, freqs_khz=None, gap_counts=None) -> np.ndarray:
        """Every distinct design, as encoded rows (for enumeration); gaps, frequencies and gap counts
        default to every value the search can produce.  Gaps apply to discrete-gap materials only.
        """
        gaps_mm = self.gap_values() if gaps_mm is None else gaps_mm
        freqs_khz = self.f_values() / 1e3 if freqs_khz is None else freqs_khz
        rows = []
        turns = np.arange(np.ceil(self.lower[2]), np.floor(self.upper[2]) + 1)
        wires = np.arange(len(self.wires))
        par = np.arange(np.ceil(self.lower[5]), np.floor(self.upper[5]) + 1)
        logf = np.log10(np.asarray(freqs_khz, dtype=float) * 1e3)
        counts = (np.arange(np.ceil(self.lower[7]), np.floor(self.upper[7]) + 1) if gap_counts is None
                  else np.asarray(gap_counts, dtype=float))
        for p in range(len(self.pair_material)):
            gaps = [self.lower[3]] if self.distributed[p] else list(gaps_mm)
            split = [1.0] if self.distributed[p] else counts
            stacks = np.arange(1, self.pair_max_stack[p] + 1)
            mesh = np.meshgrid([p], stacks, turns, gaps, wires, par, logf, split, indexing="ij")
            rows.append(np.column_stack([m.ravel() for m in mesh]))
        return self.canonical(np.vstack(rows))

    def sample(self, rng: np.random.Generator, n: int) -> np.ndarray:
        """``n`` encoded points drawn uniformly within the bounds."""
        return rng.uniform(self.lower, self.upper, size=(n, N_VAR))
