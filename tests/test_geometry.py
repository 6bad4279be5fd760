"""Core geometry against IEC 60205 and the effective parameters listed for standard sizes."""
import numpy as np
import pytest

from fluxfront.models import geometry


def test_ring_core_matches_iec_60205_check_value():
    # IEC 60205 ring of rectangular section, r1 10 mm, r2 20 mm, h 10 mm:
    # le 87.10 mm, Ae 96.09 mm2, Ve 8370 mm3 (shared/reference/methods.md, section 6);
    # tolerance: the check values are rounded to 4 digits.
    le, ae, ve = geometry.ring_core_effective(10e-3, 20e-3, 10e-3)
    assert le * 1e3 == pytest.approx(87.10, abs=0.006)
    assert ae * 1e6 == pytest.approx(96.09, abs=0.006)
    assert ve * 1e9 == pytest.approx(8370, abs=0.6)


def test_effective_parameters_of_uniform_path_are_its_length_and_area():
    # IEC 60205 definitions: one segment of length l and area A gives le = l, Ae = A, Ve = l A exactly.
    le, ae, ve = geometry.effective_parameters(np.array([0.1]), np.array([2e-4]))
    assert (le, ae, ve) == pytest.approx((0.1, 2e-4, 2e-5), rel=1e-15)


# Effective parameters of IEC 62317 sizes as listed in the standard's tables and common data
# sheets (values from memory).  Tolerance: 2.5 % on le and 8 % on Ae because the geometry keeps
# principal dimensions only (no chamfers or rounded corners, which shrink the real sections).
IEC_62317_FROM_MEMORY = [
    ("E42/21/15", "E", dict(a=42.0, b=21.0, c=15.2, d=14.8, e=29.5, f=12.2), 97.0, 178.0),
    ("E55/28/21", "E", dict(a=55.0, b=27.6, c=20.6, d=18.5, e=37.5, f=17.2), 124.0, 354.0),
    ("E65/32/27", "E", dict(a=65.0, b=32.8, c=27.4, d=22.2, e=44.2, f=20.0), 147.0, 540.0),
    ("ETD34", "ETD", dict(a=34.2, b=17.3, c=10.8, d=11.8, e=25.6, f=10.8), 78.6, 97.1),
    ("ETD39", "ETD", dict(a=39.1, b=19.8, c=12.5, d=14.2, e=30.1, f=12.5), 92.2, 125.0),
    ("ETD49", "ETD", dict(a=49.8, b=24.7, c=16.7, d=17.7, e=36.1, f=16.7), 114.0, 211.0),
]


@pytest.mark.parametrize("name,family,dims,le_mm,ae_mm2", IEC_62317_FROM_MEMORY)
def test_e_and_etd_sizes_match_listed_effective_parameters(name, family, dims, le_mm, ae_mm2):
    geo = geometry.family_geometry(family, {k: v * 1e-3 for k, v in dims.items()}, 1, 1e-3)
    assert geo.le * 1e3 == pytest.approx(le_mm, rel=0.025), name
    assert geo.ae * 1e6 == pytest.approx(ae_mm2, rel=0.08), name


def test_stacking_multiplies_section_and_volume_not_length():
    # Identical cores side by side: same path, n times the section (definition of stacking).
    dims = {k: np.array([v * 1e-3]) for k, v in dict(a=42.0, b=21.0, c=15.2, d=14.8, e=29.5, f=12.2).items()}
    one, three = (geometry.family_geometry("E", dims, s, 1e-3) for s in (1, 3))
    assert three.le == pytest.approx(one.le, rel=1e-12)
    assert three.ae == pytest.approx(3 * one.ae, rel=1e-12)
    assert three.ve == pytest.approx(3 * one.ve, rel=1e-12)
    ring1, ring2 = (geometry.ring(40e-3, 24e-3, 15e-3, s, 0.3e-3) for s in (1, 2))
    assert ring2.ae == pytest.approx(2 * ring1.ae, rel=1e-12)


def test_cut_core_path_is_rectangle_midline():
    # Mid-line of a rectangle with quarter-arc corners: 2(c + d) + pi a (plane geometry).
    g = geometry.cut_core_pair(10e-3, 20e-3, 11e-3, 33e-3, 1, 1e-3)
    assert g.le == pytest.approx(2 * (11e-3 + 33e-3) + np.pi * 10e-3, rel=1e-12)
    assert g.ae == pytest.approx(200e-6, rel=1e-12)


def test_mean_turn_length_and_box_grow_with_build():
    g = geometry.ring(40e-3, 24e-3, 15e-3, 1, 0.3e-3)
    m0, m1 = geometry.mean_turn_length(g, 0.0), geometry.mean_turn_length(g, 1e-3)
    assert m1 - m0 == pytest.approx(2 * np.pi * 1e-3, rel=1e-12)  # offset perimeter grows by 2 pi t
    small, large = geometry.boxed_size(g, 0.0), geometry.boxed_size(g, 2e-3)
    assert np.all(large >= small)
    vol, surf = geometry.box_volume_and_surface(np.array([1.0, 2.0, 3.0]))
    assert (vol, surf) == (6.0, 22.0)


def test_arrays_and_scalars_agree():
    r1 = np.array([5e-3, 10e-3, 12e-3])
    le, _, _ = geometry.ring_core_effective(r1, 20e-3, 10e-3)
    assert le[1] == pytest.approx(geometry.ring_core_effective(10e-3, 20e-3, 10e-3)[0], rel=1e-15)


@pytest.mark.parametrize("args", [(20e-3, 10e-3, 10e-3), (0.0, 10e-3, 10e-3), (10e-3, 20e-3, -1e-3)])
def test_impossible_ring_is_refused(args):
    with pytest.raises(ValueError):
        geometry.ring_core_effective(*args)


def test_unknown_family_lists_valid_ones():
    with pytest.raises(ValueError, match="expected one of"):
        geometry.family_geometry("RM", {}, 1, 1e-3)
