"""Bad input of every kind: one line naming the file or field, the value and the expected form;
the documented exit code; no traceback; nothing created or overwritten.

The cases are the project's own; each builds its inputs in a fresh folder, runs the command in
process, and compares the folder's files before and after.
"""
import shutil
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fluxfront.cli.main import main
from fluxfront.design.spec import demo_spec_path

DEMO = demo_spec_path().read_text()
ROW_HEAD = "material,shape,stack,turns,gap_mm,gaps,wire,parallel,f_sw_khz\n"
ROW = "mnzn_ferrite_100k,ETD49,1,40,3.0,1,litz175x38awg,1,65\n"
MATERIAL = """[[material]]
id = "my_ferrite"
class = "MnZn power ferrite"
density_kg_m3 = 4800
b_sat_t_25c = 0.49
b_sat_tempco_per_k = -2.7e-3
mu_initial = 2300
loss_temp_ref_c = 100
loss_temp_c1 = 0.0
loss_temp_c2 = 1.4e-4
t_max_c = 140
gap_kind = "discrete"
families = ["E"]
price_per_kg = 8.0
provenance = "test entry"
steinmetz = [{ f_min_hz = 20e3, f_max_hz = 200e3, b_min_t = 0.01, b_max_t = 0.3, k = 3.18, alpha = 1.4, beta = 2.6 }]
"""


def spec_with(old, new):
    assert old in DEMO, old
    return DEMO.replace(old, new, 1)


# (name, files to write {relative path: text or bytes}, argv with {d} for the folder, exit code, text in the message)
SPEC_CASES = [
    ("bool-as-number", spec_with("efficiency = 0.96", "efficiency = true"), "converter.efficiency"),
    ("inf-power", spec_with("power_w = 1500 ", "power_w = inf "), "converter.power_w"),
    ("nan-ambient", spec_with("ambient_c = 50 ", "ambient_c = nan "), "limits.ambient_c"),
    ("negative-power", spec_with("power_w = 1500 ", "power_w = -1500 "), "converter.power_w"),
    ("text-bus", spec_with("bus_v = 400 ", 'bus_v = "400" '), "converter.bus_v"),
    ("zero-efficiency", spec_with("efficiency = 0.96", "efficiency = 0"), "converter.efficiency"),
    ("bus-below-line-peak", spec_with("bus_v = 400 ", "bus_v = 300 "), "v_rms"),
    ("unknown-top-key", DEMO + "\n[extras]\nx = 1\n", "extras"),
    ("misspelt-op-key", spec_with('name = "low line, full load"', 'naem = "x"'), "naem"),
    ("misspelt-limit", spec_with("fill_max = 0.40", "fil_max = 0.40"), "fil_max"),
    ("turns-range", spec_with("turns_max = 150", "turns_max = 5"), "turns_max"),
    ("freq-range", spec_with("f_sw_khz_max = 300", "f_sw_khz_max = 10"), "f_sw_khz_max"),
    ("hot-below-ambient", spec_with("hot_spot_max_c = 115", "hot_spot_max_c = 40"), "hot_spot_max_c"),
    ("thermal-model", spec_with('model = "natural"', 'model = "Natural"'), "'natural'"),
    ("mounting", spec_with('mounting = "board"', 'mounting = "wall"'), "thermal.mounting"),
    ("weights-zero", DEMO.replace("weight = 0.15", "weight = 0").replace("weight = 0.35", "weight = 0")
     .replace("weight = 0.10", "weight = 0").replace("weight = 0.05", "weight = 0"), "weights"),
    ("samples-odd", spec_with("samples_per_half_cycle = 64", "samples_per_half_cycle = 63"), "samples_per_half_cycle"),
    ("gaps-max-zero", spec_with("gaps_max = 4", "gaps_max = 0"), "search.gaps_max"),
    ("line-sag", spec_with("line_sag = 0.95", "line_sag = 1.5"), "tolerance.line_sag"),
    ("tolerance-bool", spec_with("gap_percent = 5", "gap_percent = false"), "tolerance.gap_percent"),
    ("system-without-switching", spec_with('loss_objective = "inductor"', 'loss_objective = "system"'), "switching"),
    ("current-limit-negative", spec_with("current_limit_factor = 1.25", "current_limit_factor = -1"),
     "current_limit_factor"),
    ("keepout-nan", spec_with("gap_keepout_mm = 0.0", "gap_keepout_mm = nan"), "gap_keepout_mm"),
    ("not-toml", "this is [not toml", "not valid TOML"),
    ("no-operating-point", DEMO[: DEMO.index("[[operating_point]]")] + DEMO[DEMO.index("[limits]"):],
     "operating_point"),
]


@pytest.mark.parametrize("name,text,message", SPEC_CASES, ids=[c[0] for c in SPEC_CASES])
def test_bad_spec(tmp_path, capsys, name, text, message):
    _check(tmp_path, capsys, {"spec.toml": text, "rows.csv": ROW_HEAD + ROW},
           ["evaluate", "{d}/spec.toml", "{d}/rows.csv"], 2, message)


CATALOG_CASES = [
    ("duplicate-id", MATERIAL + MATERIAL, "appears twice"),
    ("nan-k", MATERIAL.replace("k = 3.18", "k = nan"), "steinmetz"),
    ("inf-k", MATERIAL.replace("k = 3.18", "k = inf"), "steinmetz"),
    ("bool-density", MATERIAL.replace("density_kg_m3 = 4800", "density_kg_m3 = true"), "density_kg_m3"),
    ("negative-density", MATERIAL.replace("density_kg_m3 = 4800", "density_kg_m3 = -4800"), "density_kg_m3"),
    ("unknown-field", MATERIAL.replace("price_per_kg = 8.0", "price_per_kilo = 8.0"), "price_per_kilo"),
    ("bad-family", MATERIAL.replace('families = ["E"]', 'families = ["Q"]'), "families"),
    ("bias-negative", MATERIAL + "bias_loss_k = -1\n", "bias_loss_k"),
    ("cut-factor-on-ferrite", MATERIAL + "cut_loss_factor = 1.5\n", "tape_wound"),
    ("overlapping-bands", MATERIAL.replace(
        "steinmetz = [{ f_min_hz = 20e3", "steinmetz = [{ f_min_hz = 30e3, f_max_hz = 90e3, b_min_t = 0.01, b_max_t = 0.3, "
        "k = 3.18, alpha = 1.4, beta = 2.6 }, { f_min_hz = 20e3"), "overlap"),
    ("binary-file", b"\x00\xff\xfe\x00garbage", "UTF-8"),
    ("not-toml", "[[material\nid =", "not valid TOML"),
]


@pytest.mark.parametrize("name,text,message", CATALOG_CASES, ids=[c[0] for c in CATALOG_CASES])
def test_bad_catalog(tmp_path, capsys, name, text, message):
    _check(tmp_path, capsys, {"cat/materials.toml": text}, ["catalog", "check", "{d}/cat"], 2, message)


ROW_CASES = [
    ("unknown-material", ROW_HEAD + ROW.replace("mnzn_ferrite_100k", "unobtainium"), "unknown material"),
    ("unknown-column", ROW_HEAD.replace("f_sw_khz", "f_sw_khz,colour") + ROW.replace("65\n", "65,red\n"), "colour"),
    ("duplicate-column", ROW_HEAD.replace("turns,", "turns,turns,") + ROW.replace(",40,", ",40,40,"), "twice"),
    ("missing-column", ROW_HEAD.replace("wire,", "") + ROW.replace("litz175x38awg,", ""), "missing column 'wire'"),
    ("text-turns", ROW_HEAD + ROW.replace(",40,", ",forty,"), "'turns'"),
    ("fractional-turns", ROW_HEAD + ROW.replace(",40,", ",40.5,"), "'turns'"),
    ("nan-gap", ROW_HEAD + ROW.replace(",3.0,", ",nan,"), "'gap_mm'"),
    ("inf-frequency", ROW_HEAD + ROW.replace(",65\n", ",inf\n"), "'f_sw_khz'"),
    ("gap-on-powder", ROW_HEAD + "fesial_powder_60,T57/26/15,1,40,1.0,1,awg16-g2,1,65\n", "distributed gap"),
    ("gaps-on-powder", ROW_HEAD + "fesial_powder_60,T57/26/15,1,40,0,2,awg16-g2,1,65\n", "'gaps'"),
    ("gaps-zero", ROW_HEAD + ROW.replace(",3.0,1,", ",3.0,0,"), "'gaps'"),
    ("stack-too-tall", ROW_HEAD + ROW.replace(",ETD49,1,", ",ETD49,9,"), "'stack'"),
    ("shape-not-in-material", ROW_HEAD + ROW.replace("ETD49", "T57/26/15"), "not made"),
    ("empty-csv", "", "not a readable CSV"),
    ("header-only", ROW_HEAD, "no design rows"),
]


@pytest.mark.parametrize("name,text,message", ROW_CASES, ids=[c[0] for c in ROW_CASES])
def test_bad_design_rows(tmp_path, capsys, name, text, message):
    _check(tmp_path, capsys, {"spec.toml": DEMO, "rows.csv": text}, ["evaluate", "{d}/spec.toml", "{d}/rows.csv"], 2,
           message)


def test_bool_in_a_toml_design(tmp_path, capsys):
    one = 'material = "mnzn_ferrite_100k"\nshape = "ETD49"\nstack = 1\nturns = true\ngap_mm = 3.0\n' \
          'wire = "litz175x38awg"\nparallel = 1\nf_sw_khz = 65\n'
    _check(tmp_path, capsys, {"spec.toml": DEMO, "one.toml": one}, ["evaluate", "{d}/spec.toml", "{d}/one.toml"], 2,
           "true/false")


OPTION_CASES = [
    (["run", "{d}/spec.toml", "--out", "{d}/r", "--jobs", "0"], "--jobs = 0"),
    (["run", "{d}/spec.toml", "--out", "{d}/r", "--population", "-5"], "--population = -5"),
    (["run", "{d}/spec.toml", "--out", "{d}/r", "--seed", "-1"], "--seed = -1"),
    (["run", "{d}/spec.toml", "--out", "{d}/r", "--hours", "nan"], "--hours = nan"),
    (["run", "{d}/spec.toml", "--out", "{d}/r", "--hours", "-1"], "--hours = -1"),
    (["run", "{d}/spec.toml", "--out", "{d}/r", "--generations", "0"], "--generations = 0"),
    (["run", "{d}/spec.toml", "--out", "{d}/r", "--stagnation", "0"], "--stagnation = 0"),
    (["flux-map", "{d}/spec.toml", "--out", "{d}/r", "--loss-density", "nan"], "--loss-density = nan"),
    (["flux-map", "{d}/spec.toml", "--out", "{d}/r", "--loss-density", "-3"], "--loss-density = -3"),
    (["run", "{d}/missing.toml", "--out", "{d}/r"], "missing.toml"),
    (["evaluate", "{d}/spec.toml", "{d}/rows.txt"], "must end in .csv or .toml"),
    (["evaluate", "{d}/spec.toml", "{d}/nowhere.csv"], "no such designs file"),
]


@pytest.mark.parametrize("argv,message", OPTION_CASES, ids=[f"{a[0]}-{a[-1]}" for a, _ in OPTION_CASES])
def test_bad_options(tmp_path, capsys, argv, message):
    _check(tmp_path, capsys, {"spec.toml": DEMO, "rows.txt": ROW_HEAD + ROW}, argv, 2, message)
    assert not (tmp_path / "r").exists()


def test_evaluate_out_naming_a_folder_is_one_line_exit_1(tmp_path, capsys):
    (tmp_path / "folder").mkdir()
    _check(tmp_path, capsys, {"spec.toml": DEMO, "rows.csv": ROW_HEAD + ROW},
           ["evaluate", "{d}/spec.toml", "{d}/rows.csv", "--out", "{d}/folder"], 1, "cannot read or write")


@pytest.fixture(scope="module")
def tiny_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("tiny")
    spec = folder / "spec.toml"
    spec.write_text(DEMO.replace('materials = ["all"]', 'materials = ["mnzn_ferrite_100k"]'))
    assert main(["run", str(spec), "--out", str(folder / "run"), "--population", "6", "--generations", "5",
                 "--jobs", "1", "--quiet"]) in (0, 3)
    return folder / "run"


RUN_CASES = [
    ("run.json", "{not json", ["resume", "{d}/run"], "run.json: not readable JSON"),
    ("run.json", '{"tool": "fluxfront"}', ["resume", "{d}/run"], "no 'settings'"),
    ("run.json", '{"settings": {"seed": "one"}}', ["resume", "{d}/run"], "settings.seed"),
    ("run.json", '{"settings": {"population": true}}', ["resume", "{d}/run"], "settings.population"),
    ("run.json", '{"settings": {"hours": -3}}', ["resume", "{d}/run"], "settings.hours"),
    ("run.json", '{"settings": {"fork": 1}}', ["resume", "{d}/run"], "unknown setting"),
    ("checkpoint.npz", b"", ["resume", "{d}/run"], "checkpoint.npz"),
    ("checkpoint.npz", b"PK\x03\x04 truncated", ["resume", "{d}/run"], "checkpoint.npz"),
    ("checkpoint.npz", "plain text", ["resume", "{d}/run"], "checkpoint.npz"),
    ("catalog.json", "[1, 2]", ["resume", "{d}/run"], "not a catalog snapshot"),
    ("catalog.json", None, ["resume", "{d}/run"], "catalog.json: missing"),
    ("pareto.csv", "garbage,\n\x00\x01", ["pick", "{d}/run", "--knee"], "pareto.csv"),
    ("pareto.csv", "material,shape\nx,y\n", ["pick", "{d}/run", "--knee"], "column"),
    ("history.csv", b"\xff\xfe\x00", ["plot", "{d}/run"], "history"),
    ("run.json", None, ["pick", "{d}/run", "--knee"], "not a run folder"),
]


@pytest.mark.parametrize("name,content,argv,message", RUN_CASES,
                         ids=[f"{c[0]}-{i}" for i, c in enumerate(RUN_CASES)])
def test_damaged_run_folder(tmp_path, capsys, tiny_run, name, content, argv, message):
    shutil.copytree(tiny_run, tmp_path / "run")
    target = tmp_path / "run" / name
    if content is None:
        target.unlink()
    else:
        target.write_bytes(content if isinstance(content, bytes) else content.encode())
    _check(tmp_path, capsys, {}, argv, 2, message)


def test_resume_with_a_differing_catalog_is_refused(tmp_path, capsys, tiny_run):
    shutil.copytree(tiny_run, tmp_path / "run")
    changed = MATERIAL.replace("my_ferrite", "mnzn_ferrite_100k").replace('families = ["E"]',
                                                                           'families = ["E", "ETD", "PQ"]')
    _check(tmp_path, capsys, {"cat/materials.toml": changed}, ["resume", "{d}/run", "--catalog", "{d}/cat"], 2,
           "materials mnzn_ferrite_100k")


def test_more_generations_must_be_positive(tmp_path, capsys, tiny_run):
    shutil.copytree(tiny_run, tmp_path / "run")
    _check(tmp_path, capsys, {}, ["resume", "{d}/run", "--more-generations", "0"], 2, "--more-generations = 0")


def test_pick_row_out_of_range(tmp_path, capsys, tiny_run):
    shutil.copytree(tiny_run, tmp_path / "run")
    _check(tmp_path, capsys, {}, ["pick", "{d}/run", "--row", "9999"], 2, "--row = 9999")


def _snapshot(folder: Path) -> dict:
    return {p: p.read_bytes() for p in folder.rglob("*") if p.is_file()}


def _check(tmp_path, capsys, files, argv, code, message):
    for rel, text in files.items():
        path = tmp_path / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_bytes(text if isinstance(text, bytes) else text.encode())
    before = _snapshot(tmp_path)
    capsys.readouterr()
    assert main([a.format(d=tmp_path) for a in argv]) == code
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1, err               # one line
    assert "Traceback" not in err and message in err, err
    assert _snapshot(tmp_path) == before                  # nothing created or overwritten


NUMERIC_FIELDS = ["power_w = 1500 ", "bus_v = 400 ", "efficiency = 0.96", "ambient_c = 50 ", "fill_max = 0.40",
                  "ripple_pp_max_fraction = 0.40", "emissivity = 0.9", "gap_keepout_mm = 0.0", "turns_max = 150",
                  "load_fraction = 0.75", "current_limit_factor = 1.25", "permeability_percent = 8"]


@settings(max_examples=40, deadline=None)
@given(field=st.sampled_from(NUMERIC_FIELDS),
       value=st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.integers(-10**6, 10**6), st.booleans(),
                       st.text(alphabet="abc01.-", max_size=4)))
def test_any_value_is_refused_in_one_line_or_evaluates_to_finite_numbers(tmp_path_factory, field, value):
    tmp = tmp_path_factory.mktemp("prop")
    key = field.split(" = ")[0]
    if isinstance(value, bool):
        written = "true" if value else "false"
    elif isinstance(value, str):
        written = f'"{value}"'
    elif isinstance(value, float) and value != value:
        written = "nan"
    elif isinstance(value, float) and abs(value) == float("inf"):
        written = "inf" if value > 0 else "-inf"
    else:
        written = repr(value)
    (tmp / "spec.toml").write_text(DEMO.replace(field, f"{key} = {written} ", 1))
    (tmp / "rows.csv").write_text(ROW_HEAD + ROW)
    code = main(["evaluate", str(tmp / "spec.toml"), str(tmp / "rows.csv"), "--out", str(tmp / "out.csv")])
    assert code in (0, 2)
    if code == 0:
        import pandas as pd

        out = pd.read_csv(tmp / "out.csv").select_dtypes("number")
        assert out.notna().all().all() and (out.abs() < float("inf")).all().all()


def test_a_crafted_checkpoint_cannot_run_code(tmp_path, capsys, tiny_run):
    # a pickle that would create a file when unpickled, dressed as the checkpoint (and as an array
    # inside one): resume refuses it in one line and the file never appears
    import pickle
    import zipfile

    class Payload:
        def __reduce__(self):
            return (open, (str(tmp_path / "pwned"), "w"))

    shutil.copytree(tiny_run, tmp_path / "run")
    (tmp_path / "run" / "checkpoint.npz").write_bytes(pickle.dumps(Payload()))
    _check(tmp_path, capsys, {}, ["resume", "{d}/run"], 2, "checkpoint.npz")
    with zipfile.ZipFile(tmp_path / "run" / "checkpoint.npz", "w") as z:
        z.writestr("meta.npy", pickle.dumps(Payload()))
    _check(tmp_path, capsys, {}, ["resume", "{d}/run"], 2, "checkpoint.npz")
    assert not (tmp_path / "pwned").exists()


CATALOG_FIELDS = ["density_kg_m3 = 4800", "b_sat_t_25c = 0.49", "mu_initial = 2300", "t_max_c = 140",
                  "price_per_kg = 8.0", "loss_temp_c2 = 1.4e-4", "k = 3.18", "alpha = 1.4"]


@settings(max_examples=40, deadline=None)
@given(field=st.sampled_from(CATALOG_FIELDS),
       value=st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.integers(-10**7, 10**7), st.booleans(),
                       st.text(alphabet="xyz0.", max_size=3)))
def test_any_catalog_value_is_refused_in_one_line_or_gives_finite_results(tmp_path_factory, field, value):
    tmp = tmp_path_factory.mktemp("cat")
    key = field.split(" = ")[0]
    written = ("true" if value else "false") if isinstance(value, bool) else (
        f'"{value}"' if isinstance(value, str) else ("nan" if value != value else (
            ("inf" if value > 0 else "-inf") if abs(value) == float("inf") else repr(value))))
    (tmp / "cat").mkdir()
    entry = MATERIAL.replace("my_ferrite", "mnzn_ferrite_100k").replace('families = ["E"]', 'families = ["ETD"]')
    (tmp / "cat" / "materials.toml").write_text(entry.replace(field, f"{key} = {written}", 1))
    (tmp / "spec.toml").write_text(DEMO)
    (tmp / "rows.csv").write_text(ROW_HEAD + ROW)
    code = main(["evaluate", str(tmp / "spec.toml"), str(tmp / "rows.csv"), "--catalog", str(tmp / "cat"),
                 "--out", str(tmp / "out.csv")])
    assert code in (0, 2)
    if code == 0:
        import pandas as pd

        out = pd.read_csv(tmp / "out.csv").select_dtypes("number")
        assert out.notna().all().all() and (out.abs() < float("inf")).all().all()
