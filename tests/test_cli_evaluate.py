"""The evaluate and init commands: outputs, columns, and one-line errors with exit code 2."""
import json

import pandas as pd
import pytest

from fluxfront.cli.main import main
from fluxfront.design.spec import demo_spec_path

ROW = "mnzn_ferrite_100k,ETD49,1,40,3.0,litz175x38awg,1,65\n"
HEADER = "material,shape,stack,turns,gap_mm,wire,parallel,f_sw_khz\n"
INTERFACE = ["material", "shape", "stack", "turns", "gap_mm", "gaps", "wire", "parallel", "f_sw_khz", "volume_cm3",
             "total_loss_w", "system_loss_w", "cost", "feasible", "inductance_uh", "inductance_at_peak_uh", "i_peak_a",
             "i_rms_a", "ripple_pp_max_a", "b_peak_t", "b_sat_t", "current_limit_a", "b_at_current_limit_t",
             "b_ripple_pp_max_t", "core_loss_w", "core_gap_loss_w", "core_bias_factor", "winding_dc_loss_w",
             "winding_ac_loss_w", "winding_fringing_loss_w", "switching_loss_w", "temperature_c",
             "winding_temperature_c", "core_temperature_c", "fill", "height_mm", "mass_g"]


def test_csv_in_csv_out(tmp_path, capsys):
    src = tmp_path / "d.csv"
    src.write_text(HEADER + ROW + ROW.replace("ETD49", "ETD59"))
    out = tmp_path / "out.csv"
    assert main(["evaluate", str(demo_spec_path()), str(src), "--out", str(out)]) == 0
    df = pd.read_csv(out)
    assert list(df.columns[: len(INTERFACE)]) == INTERFACE
    assert len(df) == 2 and df["volume_cm3"].iloc[1] > df["volume_cm3"].iloc[0]


def test_one_design_summary_and_json(tmp_path, capsys):
    src = tmp_path / "one.toml"
    src.write_text('material = "mnzn_ferrite_100k"\nshape = "ETD49"\nstack = 1\nturns = 40\ngap_mm = 3.0\n'
                   'wire = "litz175x38awg"\nparallel = 1\nf_sw_khz = 65\n')
    assert main(["evaluate", str(demo_spec_path()), str(src)]) == 0
    text = capsys.readouterr().out
    assert "inductance" in text and "mains" in text
    assert main(["evaluate", str(demo_spec_path()), str(src), "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert {"core", "material", "wire", "operating_points", "figures"} <= set(d)
    assert "samples" in d["operating_points"][0] and "core_loss_density_w_cm3_at_ref" in d["operating_points"][0]["samples"]


@pytest.mark.parametrize("row,message", [
    (ROW.replace("mnzn_ferrite_100k", "ferite"), "column 'material' = 'ferite': unknown material; valid:"),
    (ROW.replace("ETD49", "ETD99"), "column 'shape' = 'ETD99': unknown shape"),
    (ROW.replace("litz175x38awg", "awg99"), "column 'wire' = 'awg99': unknown wire"),
    (ROW.replace("ETD49", "T57/26/15"), "is not made in material"),
    ("fesial_powder_60,T57/26/15,1,40,1.0,awg16-g2,1,65\n", "has a distributed gap; expected 0"),
    (ROW.replace(",40,", ",4.5,"), "column 'turns' = '4.5': expected a whole number"),
    (ROW.replace(",65", ",-3"), "column 'f_sw_khz' = '-3'"),
    ("mnzn_ferrite_300k,PQ40/40,2,30,1.0,awg16-g2,1,100\n", "stacks at most 1"),
])
def test_bad_design_rows_one_line_exit_2(tmp_path, capsys, row, message):
    src = tmp_path / "d.csv"
    src.write_text(HEADER + ROW + row)
    out = tmp_path / "out.csv"
    out.write_text("previous results\n")
    assert main(["evaluate", str(demo_spec_path()), str(src), "--out", str(out)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "row 2" in err and message in err
    assert out.read_text() == "previous results\n"      # nothing already written is lost


@pytest.mark.parametrize("old,new,message", [
    ("bus_v = 400", "bus_v = 300", "its peak must stay below converter.bus_v"),
    ("fill_max = 0.40", "fill_max = 1.5", "field 'limits.fill_max' = 1.5"),
    ('model = "natural"', 'model = "wind"', "field 'thermal.model' = \"wind\""),
    ("power_w = 1500", "power_w = \"big\"", "field 'converter.power_w' = \"big\""),
    ("[converter]", "[converterr]", "unknown field 'converterr'"),
    ("samples_per_half_cycle = 64", "samples_per_half_cycle = 63", "samples_per_half_cycle"),
])
def test_bad_spec_one_line_exit_2(tmp_path, capsys, old, new, message):
    spec = tmp_path / "spec.toml"
    text = demo_spec_path().read_text()
    assert old in text
    spec.write_text(text.replace(old, new, 1))
    src = tmp_path / "d.csv"
    src.write_text(HEADER + ROW)
    assert main(["evaluate", str(spec), str(src)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and message in err


def test_init_writes_demo_spec_and_refuses_to_overwrite(tmp_path, capsys):
    target = tmp_path / "mine.toml"
    assert main(["init", str(target)]) == 0
    assert target.read_text() == demo_spec_path().read_text()
    assert main(["init", str(target)]) == 2
    assert "--force" in capsys.readouterr().err


def test_json_carries_every_input_for_a_hand_recomputation(tmp_path, capsys):
    src = tmp_path / "one.csv"
    src.write_text(HEADER + ROW)
    assert main(["evaluate", str(demo_spec_path()), str(src), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert {"bus_v", "line_hz", "efficiency", "power_w"} <= set(data["inputs"]["converter"])
    assert {"ambient_c", "hot_spot_max_c", "current_limit_factor"} <= set(data["inputs"]["limits"])
    assert {"model", "mounting", "emissivity", "winding_conductivity_w_mk"} <= set(data["inputs"]["thermal"])
    assert data["shape"]["family"] == "ETD" and set(data["shape"]["dims_mm"]) == set("abcdef")
    assert data["design"]["gaps"] == 1 and {"length_mm", "width_mm", "height_mm"} <= set(data["figures"])
    assert {"a_min_mm2", "core_box_mm"} <= set(data["core"])
