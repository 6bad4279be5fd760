"""Catalog contents, validation of broken entries, user catalogs and the catalog command."""
import json

import pytest

from fluxfront.catalog import load_catalog
from fluxfront.cli.main import main

REQUIRED_CLASSES = {"MnZn power ferrite", "Fe-based amorphous", "nanocrystalline", "Fe-Si-Al powder", "Fe-Ni powder",
                    "MoNi powder", "iron powder"}


def test_builtin_catalog_has_the_required_entries(catalog):
    assert len(catalog.materials) >= 8
    assert REQUIRED_CLASSES <= {m.class_ for m in catalog.materials.values()}
    assert sum(m.class_ == "MnZn power ferrite" for m in catalog.materials.values()) >= 2
    assert len(catalog.shapes) >= 35
    assert {s.family for s in catalog.shapes.values()} == {"E", "ETD", "PQ", "T", "C"}
    assert {f"awg{n}-g{g}" for n in range(10, 41) for g in (1, 2)} <= set(catalog.wires)
    assert all(m.provenance for m in catalog.materials.values())
    for m in catalog.materials.values():   # powders carry a roll-off fit, gapped materials do not
        assert (m.gap_kind == "distributed") == (m.rolloff_b is not None)


GOOD = """
[[material]]
id = "my_ferrite"
class = "MnZn power ferrite"
density_kg_m3 = 4800
b_sat_t_25c = 0.5
b_sat_tempco_per_k = -2.5e-3
mu_initial = 2000
loss_temp_ref_c = 100
loss_temp_c1 = 0.0
loss_temp_c2 = 1.5e-4
t_max_c = 140
gap_kind = "discrete"
families = ["E"]
price_per_kg = 9.0
provenance = "test entry, invented"
steinmetz = [{ f_min_hz = 1e3, f_max_hz = 300e3, b_min_t = 0.01, b_max_t = 0.3, k = 3.0, alpha = 1.4, beta = 2.6 }]
"""

BROKEN = [
    ("b_sat_t_25c = 0.5", "b_sat_t_25c = 3.0", "field 'b_sat_t_25c' = 3.0"),
    ("alpha = 1.4", "alpha = 3.4", "field 'steinmetz.0.alpha' = 3.4"),
    ("beta = 2.6", "beta = 1.2", "field 'steinmetz.0.beta' = 1.2"),
    ('gap_kind = "discrete"', 'gap_kind = "spacer"', "field 'gap_kind' = \"spacer\""),
    ('families = ["E"]', 'families = ["RM"]', "field 'families.0' = \"RM\""),
    ('gap_kind = "discrete"', 'gap_kind = "distributed"', "needs rolloff_a"),
    ("density_kg_m3 = 4800\n", "", "field 'density_kg_m3' is missing"),
    ("f_max_hz = 300e3", "f_max_hz = 500", "f_max_hz must exceed f_min_hz"),
    ('price_per_kg = 9.0', 'price_per_kg = "cheap"', "field 'price_per_kg' = \"cheap\""),
    ('provenance = "test entry, invented"', 'provenance = "test entry, invented"\ncolour = "black"',
     "unknown field 'colour'; valid fields: id, class"),
]


@pytest.mark.parametrize("old,new,message", BROKEN)
def test_broken_material_gives_one_line_and_exit_2(tmp_path, capsys, old, new, message):
    path = tmp_path / "materials.toml"
    path.write_text(GOOD.replace(old, new))
    assert main(["catalog", "check", str(tmp_path)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert str(path) in err and "material 'my_ferrite'" in err and message in err


def test_discrete_gap_material_on_a_ring_family_is_refused(tmp_path, capsys):
    # a ring family has no leg for a ground gap (gap_legs = 0 in shapes.toml): no model covers the
    # fringing, loss or cost of a gap there, so the search must not be offered one
    (tmp_path / "materials.toml").write_text(GOOD.replace('families = ["E"]', 'families = ["E", "T"]'))
    assert main(["catalog", "check", str(tmp_path)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert "material 'my_ferrite'" in err and "family 'T' has gap_legs = 0" in err and "gap_kind" in err


@pytest.mark.parametrize("text,message", [
    ('[[shape]]\nid = "E99"\nfamily = "E"\ndims = { a = 10, b = 5, c = 5, d = 3, e = 12, f = 4 }\n', "a > e > f"),
    ('[[shape]]\nid = "T1"\nfamily = "T"\ndims = { od = 10, id = 12, h = 5 }\n', "od > id"),
    ('[[shape]]\nid = "T2"\nfamily = "T"\ndims = { od = 10, h = 5 }\n', "must be exactly od, id, h"),
    ('[[shape]]\nid = "X1"\nfamily = "RM"\ndims = { a = 1 }\n', "field 'family' = \"RM\""),
    ('[[shape]]\nid = "T3"\nfamily = "T"\ndims = { od = 10, id = -2, h = 5 }\n', "field 'dims.id' = -2"),
])
def test_broken_shape_gives_one_line_and_exit_2(tmp_path, capsys, text, message):
    (tmp_path / "shapes.toml").write_text(text)
    assert main(["catalog", "check", str(tmp_path / "shapes.toml")]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and message in err


def test_broken_toml_and_missing_path(tmp_path, capsys):
    (tmp_path / "wires.toml").write_text("[copper\n")
    assert main(["catalog", "check", str(tmp_path)]) == 2
    assert "not valid TOML" in capsys.readouterr().err
    assert main(["catalog", "check", str(tmp_path / "nope")]) == 2
    assert "no such catalog" in capsys.readouterr().err


def test_user_catalog_adds_and_overrides_by_id(tmp_path, capsys):
    (tmp_path / "materials.toml").write_text(GOOD + GOOD.replace('"my_ferrite"', '"mnzn_ferrite_100k"')
                                             .replace("price_per_kg = 9.0", "price_per_kg = 99.0"))
    cat = load_catalog([tmp_path])
    assert "my_ferrite" in cat.materials
    assert cat.materials["mnzn_ferrite_100k"].price_per_kg == 99.0
    assert main(["catalog", "check", str(tmp_path)]) == 0
    assert "valid" in capsys.readouterr().out


@pytest.mark.parametrize("what,key", [("materials", "provenance"), ("shapes", "ve_cm3"), ("wires", "outer_diameter_mm")])
def test_catalog_json_listing(capsys, what, key):
    assert main(["catalog", what, "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    assert rows and all(key in r for r in rows)


def test_unknown_id_lists_valid_names(catalog):
    with pytest.raises(ValueError, match="valid: mnzn_ferrite_100k"):
        catalog.material_index("ferite")
