"""The design space of a spec: what the search may choose, encoded as a vector of numbers.

Encoding (one row of X per design, all real numbers, rounded by ``decode``):

====  ===================  ===================================================================
 x    meaning              decoding
====  ===================  ===================================================================
 0    core choice          index into the list of allowed (material, shape) pairs, ordered by
                           material then core volume, so neighbouring indices are similar cores
 1    stack                1..stack_max, clipped to the shape family's own maximum
 2    turns                turns_min..turns_max
 3    gap                  index into the gaps gap_mm_min..gap_mm_max [mm] in steps of
                           gap_mm_step; forced to 0 mm for distributed-gap materials
 4    wire                 index into the allowed wires, ordered by copper area
 5    parallel             1..parallel_max
 6    frequency            index into the frequencies f_sw_khz_min..f_sw_khz_max in steps of
                           f_sw_khz_step
 7    gaps                 1..gaps_max discrete gaps per gapped leg; forced to 1 for
                           distributed-gap materials
====  ===================  ===================================================================

The search runs one island per material (``island``): each island encodes only that material's
pairs, and its rows are mapped back to the whole space's numbering (``to_global``) for the archive.

Every variable is a whole number (an index or a count): the variable k spans [k - 0.5, k + 0.5),
so that sampling and the operators' steps treat every allowed value alike (a frequency or a gap
at the end of its range is as likely as one in the middle).

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
HALF = 0.499999   # a whole-number variable k spans [k - HALF, k + HALF]


def _steps(lo: float, hi: float, step: float, digits: int) -> np.ndarray:
    """Every multiple of ``step`` from ``lo`` to ``hi`` (both included when on the grid), rounded."""
    first, last = np.ceil(lo / step - 1e-9), np.floor(hi / step + 1e-9)
    return np.round(np.arange(first, last + 1) * step, digits)


def _choose(requested: list[str], table: dict, kind: str) -> list[str]:
    if requested == ["all"]:
        return list(table)
    unknown = [r for r in requested if r not in table]      # (dict lookups: linear in the catalog)
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
    gap_mm_values: np.ndarray | None = None   # the gaps index 3 points into [mm]
    f_values_hz: np.ndarray | None = None     # the frequencies index 6 points into [Hz]
    pair_global: np.ndarray | None = None  # island spaces: each pair's number in the whole space

    @classmethod
    def from_spec(cls, spec: Spec, catalog: Catalog) -> "DesignSpace":
        s = spec.search
        mats = _choose(s.materials, catalog.materials, "material")
        shapes = _choose(s.shapes, catalog.shapes, "shape")
        wires = _choose(s.wires, catalog.wires, "wire")
        vol = catalog.shape_table().set_index("id")["ve_cm3"].to_dict()
        by_volume = sorted(shapes, key=lambda x: vol[x])          # once: the space builds in linear time
        pairs = [(catalog.material_index(mname), catalog.shape_index(sname))
                 for mname in mats
                 for sname in by_volume
                 if catalog.shapes[sname].family in catalog.materials[mname].families]
        if not pairs:
            raise InputError("search: no allowed shape is made in any allowed material; "
                             "widen search.materials or search.shapes")
        pm, ps = (np.array(v) for v in zip(*pairs))
        w_idx = np.array(sorted((catalog.wire_index(w) for w in wires),
                                key=lambda i: catalog.wire_arrays["copper_area"][i]))
        gaps = _steps(s.gap_mm_min, s.gap_mm_max, s.gap_mm_step, 6)
        freqs = _steps(s.f_sw_khz_min * 1e3, s.f_sw_khz_max * 1e3, s.f_sw_khz_step * 1e3, 3)
        if len(gaps) == 0 or len(freqs) == 0:
            raise InputError("search: no gap or no frequency step lies within its range; check search.gap_mm_* "
                             "and search.f_sw_khz_*")
        lo = np.array([0, 1, s.turns_min, 0, 0, 1, 0, 1], dtype=float)
        hi = np.array([len(pairs) - 1, s.stack_max, s.turns_max, len(gaps) - 1, len(w_idx) - 1, s.parallel_max,
                       len(freqs) - 1, s.gaps_max], dtype=float)
        return cls(pm, ps, np.minimum(catalog.shape_arrays["max_stack"][ps], s.stack_max), w_idx, lo - HALF,
                   hi + HALF, catalog.material_arrays.distributed_gap[pm], gaps, freqs)

    @property
    def size(self) -> float:
        """Number of distinct encoded points (an upper bound on distinct designs)."""
        return float(np.prod(np.round(self.upper - self.lower)))

    def island(self, material_index: int, f_band_hz: tuple[float, float] | None = None) -> "DesignSpace":
        """The part of the space that uses one material (the search runs one island per material).

        ``f_band_hz`` narrows the frequency range to where the material's Steinmetz fits hold, so the
        search never rests its loss figures on an extrapolated fit (when the two ranges overlap).
        """
        keep = np.nonzero(self.pair_material == material_index)[0]
        if keep.size == 0:
            raise ValueError(f"material number {material_index} has no pair in this space")
        upper, lower = self.upper.copy(), self.lower.copy()
        upper[0] = keep.size - 1 + HALF
        if f_band_hz is not None:
            inside = np.nonzero((self.f_values_hz >= f_band_hz[0]) & (self.f_values_hz <= f_band_hz[1]))[0]
            if inside.size:
                lower[6], upper[6] = inside[0] - HALF, inside[-1] + HALF
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
        return self.gap_mm_values

    def f_values(self) -> np.ndarray:
        """Every switching frequency this space can produce [Hz] (an island: within its band)."""
        return self.f_values_hz[int(np.rint(self.lower[6])):int(np.rint(self.upper[6])) + 1]

    def decode(self, x: np.ndarray) -> Designs:
        """Rows of encoded variables -> valid Designs (rounding and repair, see module doc)."""
        x = np.clip(np.atleast_2d(np.asarray(x, dtype=float)), self.lower, self.upper)
        pair = np.rint(x[:, 0]).astype(int)
        stack = np.minimum(np.rint(x[:, 1]).astype(int), self.pair_max_stack[pair])
        gap = np.where(self.distributed[pair], 0.0, self.gap_mm_values[np.rint(x[:, 3]).astype(int)]) * 1e-3
        f_sw = self.f_values_hz[np.rint(x[:, 6]).astype(int)]
        gaps = np.where(self.distributed[pair], 1.0, np.rint(x[:, 7]))
        return Designs(self.pair_material[pair], self.pair_shape[pair], stack, np.rint(x[:, 2]), gap,
                       self.wires[np.rint(x[:, 4]).astype(int)], np.rint(x[:, 5]), f_sw, gaps)

    def canonical(self, x: np.ndarray) -> np.ndarray:
        """The encoded point of the design that ``x`` decodes to (repairs applied, bounds kept)."""
        x = np.clip(np.atleast_2d(np.asarray(x, dtype=float)), self.lower, self.upper)
        d = self.decode(x)
        pair = np.rint(x[:, 0])
        gap = np.where(self.distributed[pair.astype(int)], 0.0, np.rint(x[:, 3]))
        # + 0.0 turns the -0.0 that rint gives just below index 0 into 0.0: one design, one row
        return np.column_stack([pair, d.stack, d.turns, gap, np.rint(x[:, 4]), d.parallel, np.rint(x[:, 6]),
                                d.gaps]) + 0.0

    def grid(self, gaps_mm=None, freqs_khz=None, gap_counts=None) -> np.ndarray:
        """Every distinct design, as encoded rows (for enumeration); gaps, frequencies and gap counts
        default to every value the search can produce.  Gaps apply to discrete-gap materials only.
        """
        gap_idx = (np.arange(len(self.gap_mm_values)) if gaps_mm is None
                   else self._indices(self.gap_mm_values, gaps_mm, "gap"))
        f_idx = (np.arange(np.rint(self.lower[6]), np.rint(self.upper[6]) + 1) if freqs_khz is None
                 else self._indices(self.f_values_hz, np.asarray(freqs_khz, dtype=float) * 1e3, "frequency"))
        rows = []
        turns = np.arange(np.ceil(self.lower[2]), np.floor(self.upper[2]) + 1)
        wires = np.arange(len(self.wires))
        par = np.arange(np.ceil(self.lower[5]), np.floor(self.upper[5]) + 1)
        counts = (np.arange(np.ceil(self.lower[7]), np.floor(self.upper[7]) + 1) if gap_counts is None
                  else np.asarray(gap_counts, dtype=float))
        for p in range(len(self.pair_material)):
            gaps = [0] if self.distributed[p] else list(gap_idx)
            split = [1.0] if self.distributed[p] else counts
            stacks = np.arange(1, self.pair_max_stack[p] + 1)
            mesh = np.meshgrid([p], stacks, turns, gaps, wires, par, f_idx, split, indexing="ij")
            rows.append(np.column_stack([m.ravel() for m in mesh]))
        return self.canonical(np.vstack(rows))

    @staticmethod
    def _indices(values: np.ndarray, wanted, kind: str) -> np.ndarray:
        wanted = np.atleast_1d(np.asarray(wanted, dtype=float))
        idx = np.array([int(np.argmin(np.abs(values - w))) for w in wanted])
        off = ~np.isclose(values[idx], wanted, rtol=1e-9, atol=1e-9)
        if off.any():
            raise ValueError(f"{kind} {wanted[off][0]:g} is not a step of the space")
        return idx

    def sample(self, rng: np.random.Generator, n: int) -> np.ndarray:
        """``n`` encoded points drawn uniformly within the bounds."""
        return rng.uniform(self.lower, self.upper, size=(n, N_VAR))
