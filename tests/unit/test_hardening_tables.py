"""Tables of analyses: nothing the user gave is lost (no overwritten input, no ignored sheet, no
file refused for one bad row), and CSV dialects are read by the same rules in the library, the
command line, batch runs and the app."""

import openpyxl
import pandas as pd
import pytest

import phasekit as pk
from phasekit.batch import run_batch
from phasekit.chemistry.tables import detect_separator, read_table_bytes
from phasekit.errors import AnalysisWarning, InputError
from tests.unit.cli_runner import run
from webapp import uploads
from webapp.messages import UserInputProblem

# invented analyses of the demo scenario (mg/kg)
HEAD = "sample,Na,K,Mg,Cl,SO4"
ROWS = ["Intake-A,10780,399,1290,19350,2710", "Heron-2,43100,1600,5150,77400,10800",
        "Heron-4,61000,14800,36000,166000,36500"]


def _write(path, lines):
    path.write_text("\n".join(lines) + "\n")
    return path


def test_batch_refuses_to_write_over_its_input_and_leaves_it_intact(tmp_path, capsys):
    src = _write(tmp_path / "w.csv", [HEAD, *ROWS])
    before = src.read_bytes()
    code, _, err = run(capsys, "batch", str(src), "--units", "mg/kg", "-o", str(src))
    assert code == 2
    assert "--output" in err and "other than the input" in err
    assert src.read_bytes() == before
    # the same file named another way (./w.csv from its directory) is caught as well
    code, _, err = run(capsys, "batch", str(src), "--units", "mg/kg", "-o", str(tmp_path / "." / "w.csv"))
    assert code == 2 and src.read_bytes() == before


def test_an_overlay_or_plot_is_never_written_over(tmp_path, capsys, test_overlays):
    ov = tmp_path / "mine.toml"
    ov.write_bytes(open(test_overlays["plus"], "rb").read())
    before = ov.read_bytes()
    code, _, err = run(capsys, "solubility", "KCl", "--overlay", str(ov), "-o", str(ov), "--format", "csv")
    assert code == 2 and "other than the input" in err
    assert ov.read_bytes() == before
    code, _, err = run(capsys, "polytherm", "KCl", "--overlay", str(ov), "--plot", str(ov))
    assert code == 2 and "--plot" in err and ov.read_bytes() == before


def _workbook(path, sheets):
    wb = openpyxl.Workbook()
    wb.remove(wb.active)
    for name, rows in sheets:
        ws = wb.create_sheet(name)
        for r in rows:
            ws.append(r)
    wb.save(path)
    return path


def _cells(line):
    return [c if not c.replace(".", "").isdigit() else float(c) for c in line.split(",")]


def test_two_sheets_of_analyses_need_a_sheet_name_and_the_error_lists_them(tmp_path, capsys):
    book = _workbook(tmp_path / "w.xlsx", [("north", [_cells(HEAD), _cells(ROWS[0])]),
                                           ("south", [_cells(HEAD), _cells(ROWS[1]), _cells(ROWS[2])])])
    code, _, err = run(capsys, "batch", str(book), "--units", "mg/kg", "--format", "csv")
    assert code == 2
    assert "'north'" in err and "'south'" in err and "--sheet" in err
    code, out, err = run(capsys, "batch", str(book), "--units", "mg/kg", "--sheet", "south", "--format", "csv")
    assert code == 0, err
    table = pd.read_csv(pd.io.common.StringIO(out))
    assert list(table["sample"]) == ["Heron-2", "Heron-4"]
    code, out, _ = run(capsys, "batch", str(book), "--units", "mg/kg", "--sheet", "1", "--format", "csv")
    assert code == 0 and "Intake-A" in out and "Heron-2" not in out
    code, _, err = run(capsys, "batch", str(book), "--units", "mg/kg", "--sheet", "east")
    assert code == 2 and "sheet" in err and "'east'" in err and "'north', 'south'" in err


def test_a_cover_sheet_before_the_data_is_skipped_with_a_note(tmp_path):
    book = _workbook(tmp_path / "w.xlsx", [("cover", [["Saltmarsh Flats pond survey"], ["invented data"]]),
                                           ("data", [_cells(HEAD), *[_cells(r) for r in ROWS]])])
    res = run_batch(book, "mg/kg", 25)
    assert res.n_rows == 3 and res.n_failed == 0
    assert any("'cover'" in w and "not read" in w for w in res.warnings)
    brines = pk.Brine.read_table(book, units="mg/kg", id_column="sample")
    assert set(brines) == {"Intake-A", "Heron-2", "Heron-4"}


def test_a_ragged_row_is_marked_and_the_other_rows_are_computed(tmp_path, capsys):
    src = _write(tmp_path / "w.csv", [HEAD, ROWS[0], ROWS[1] + ",77", ROWS[2]])
    out = tmp_path / "out.csv"
    code, _, err = run(capsys, "batch", str(src), "--units", "mg/kg", "-o", str(out))
    assert code == 1, err  # one row failed, kept
    table = pd.read_csv(out)
    assert list(table["status"]) == ["ok", "error", "ok"]
    assert "Heron-2" in table["error"][1] and "'77'" in table["error"][1]
    assert isinstance(table["first_solid"][0], str) and table["first_solid"][0]  # computed


def test_trailing_commas_on_every_line_or_one_row_are_read(tmp_path):
    src = _write(tmp_path / "w.csv", [HEAD + ",", *(r + "," for r in ROWS)])
    res = run_batch(src, "mg/kg", 25)
    assert res.n_failed == 0 and res.n_rows == 3
    src2 = _write(tmp_path / "w2.csv", [HEAD, ROWS[0] + ",", ROWS[1], ROWS[2]])
    assert run_batch(src2, "mg/kg", 25).n_failed == 0
    # a value under a header cell left empty marks that row only
    src3 = _write(tmp_path / "w3.csv", [HEAD + ",", ROWS[0] + ",", ROWS[1] + ",note", ROWS[2] + ","])
    res = run_batch(src3, "mg/kg", 25)
    assert list(res.table["status"]) == ["ok", "error", "ok"]
    assert "'note'" in res.table["error"][1]


@pytest.mark.parametrize("sep,decimal", [(";", ","), (";", "."), ("\t", ","), (",", ".")])
def test_separator_and_decimal_comma_are_read_alike_everywhere(tmp_path, sep, decimal):
    lines = ["sample;Na;Cl", "A;10780.5;19350.25", "B;43100;77400.75"]
    text = "\n".join(ln.replace(".", decimal).replace(";", sep) for ln in lines) + "\n"
    src = tmp_path / "w.csv"
    src.write_text(text)
    expected = {"A": {"Na": "10780.5", "Cl": "19350.25"}, "B": {"Na": "43100", "Cl": "77400.75"}}
    res = run_batch(src, "mg/kg", 25)
    assert res.n_failed == 0
    app = uploads.read_analyses(text.encode(), "w.csv")
    assert [r[1:] for r in app["rows"]] == [[expected[k]["Na"], expected[k]["Cl"]] for k in "AB"]
    lib = pk.Brine.read_table(src, units="mg/kg", id_column="sample")
    ref = pk.Brine.from_analysis({"Na": 10780.5, "Cl": 19350.25}, units="mg/kg")
    assert lib["A"].molalities == pytest.approx(ref.molalities, rel=1e-12)
    if sep != ",":
        assert any("separated" in w for w in res.warnings)


def test_detect_separator_rules():
    assert detect_separator("a;b;c") == ";"
    assert detect_separator("a\tb\tc") == "\t"
    assert detect_separator("a,b,c") == ","
    assert detect_separator("a;b,c") == ","  # a tie goes to the comma
    assert detect_separator("only") == ","


def test_an_xlsx_of_a_million_rows_is_refused_while_streaming(tmp_path):
    wb = openpyxl.Workbook(write_only=True)
    ws = wb.create_sheet("data")
    ws.append(["sample", "Na", "Cl"])
    for i in range(2000):
        ws.append([f"S{i}", 1000, 1500])
    path = tmp_path / "big.xlsx"
    wb.save(path)
    with pytest.raises(UserInputProblem, match="at most 500 rows"):
        uploads.read_analyses(path.read_bytes(), "big.xlsx")
    with pytest.raises(InputError, match="unpacks to"):
        read_table_bytes(path.read_bytes(), "big.xlsx", max_unpacked_bytes=10_000)


def test_app_upload_of_an_empty_file_or_a_ragged_row(tmp_path):
    with pytest.raises(UserInputProblem, match="empty"):
        uploads.read_analyses(b"", "empty.csv")
    with pytest.raises(UserInputProblem, match="empty"):
        uploads.read_analyses(b"\n\n", "blank.csv")
    tab = uploads.read_analyses(("\n".join([HEAD, ROWS[0] + ",9", ROWS[1]]) + "\n").encode(), "w.csv")
    assert len(tab["rows"]) == 2 and "0" in tab["problems"] and "1" not in tab["problems"]


def test_read_table_marks_a_ragged_row_and_keeps_the_others(tmp_path):
    src = _write(tmp_path / "w.csv", [HEAD, ROWS[0], ROWS[1] + ",5", ROWS[2]])
    with pytest.warns(AnalysisWarning, match="1 of 3 rows could not be read"):
        out = pk.Brine.read_table(src, units="mg/kg", id_column="sample")
    assert isinstance(out["Intake-A"], pk.Brine) and isinstance(out["Heron-4"], pk.Brine)
    assert isinstance(out["Heron-2"], InputError) and "'5'" in str(out["Heron-2"])


def test_read_table_refuses_a_file_above_its_size_limit_before_reading(tmp_path):
    src = _write(tmp_path / "w.csv", [HEAD, *ROWS * 2000])
    with pytest.raises(InputError, match="at most 0.1 MB"):
        pk.Brine.read_table(src, units="mg/kg", max_mb=0.1)


def test_cli_input_reads_a_semicolon_file_and_names_a_ragged_row(tmp_path, capsys):
    src = tmp_path / "w.csv"
    src.write_text("sample;Na;Cl\nA;10780,5;19350\nB;1;2;3\n")
    code, out, err = run(capsys, "saturation", "--input", str(src), "--row", "A", "--units", "mg/kg",
                         "--format", "json")
    assert code == 0, err
    code, _, err = run(capsys, "saturation", "--input", str(src), "--row", "B", "--units", "mg/kg")
    assert code == 2 and "'B'" in err and "4 cells" in err
