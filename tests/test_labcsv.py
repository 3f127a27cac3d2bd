"""Tests of sizing.labcsv: separators, decimal commas, unit conversion and the error messages.

Reference values: SI prefixes and derived units from the BIPM SI Brochure, 9th ed. (2019):
1 mN/m = 1e-3 N/m, 1 mM = 1 mmol/L = 1 mol/m**3, 1 um = 1e-6 m, T/K = t/degC + 273.15 (exact
by definition, so compared to rtol 1e-12).  The decimal comma is allowed by ISO 80000-1 (2009),
clause 7.3.2 [from memory]; that spreadsheets in decimal-comma locales write ';' between cells
is common practice.  Python's standard ``csv`` module is the independent tokeniser the reader
is compared against.
"""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest
from numpy.testing import assert_allclose

from sizing.errors import InputError
from sizing.labcsv import MAX_BYTES, detect_separator, read_lab_csv, split_header

DIMS = {"concentration": "concentration", "tension": "tension", "temperature": "temperature"}
C_MM = [0.01, 0.02, 9.676e-05, 1.5, 12.0]  # concentrations [mM]
G_MNM = [70.2, 68.25, 71.9, 55.0, 38.125]  # tensions [mN/m]


def write(tmp_path, text, name="lab.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def comma_file(tmp_path):
    rows = "".join(f"{c!r},{g!r}\n" for c, g in zip(C_MM, G_MNM))
    return write(tmp_path, "concentration [mM],tension [mN/m]\n" + rows, "point.csv")


# ------------------------------------------------------------------ separators
def test_semicolon_with_decimal_commas_reads_the_same_si_values(tmp_path):
    rows = "".join(f"{repr(c).replace('.', ',')};{repr(g).replace('.', ',')}\n"
                   for c, g in zip(C_MM, G_MNM))
    eu = read_lab_csv(write(tmp_path, "concentration [mM];tension [mN/m]\n" + rows), DIMS,
                      required=("concentration", "tension"))
    ref = read_lab_csv(comma_file(tmp_path), DIMS, required=("concentration", "tension"))
    assert set(eu.columns) == {"concentration", "tension"}
    assert eu.units == {"concentration": "mM", "tension": "mN/m"}
    for k in ("concentration", "tension"):
        assert_allclose(eu.columns[k], ref.columns[k], rtol=1e-12)
    # SI Brochure (2019): 1 mM = 1 mol/m**3, 1 mN/m = 1e-3 N/m; rtol 1e-12
    assert_allclose(eu.columns["concentration"], C_MM, rtol=1e-12)
    assert_allclose(eu.columns["tension"], np.array(G_MNM) * 1e-3, rtol=1e-12)


def test_semicolon_file_against_the_standard_csv_module(tmp_path):
    rng = np.random.default_rng(7)
    c = rng.uniform(1e-4, 50.0, 40)
    g = rng.uniform(30.0, 72.0, 40)
    text = "concentration [mM];tension [mN/m];notes\n" + "".join(
        f"{a:.6e};{b:.4f};run {i}\n".replace(".", ",") for i, (a, b) in enumerate(zip(c, g)))
    t = read_lab_csv(write(tmp_path, text), DIMS)
    # reference: Python's csv module with ';' and the decimal comma turned into a point
    ref = list(csv.reader(io.StringIO(text), delimiter=";"))[1:]
    assert_allclose(t.columns["concentration"], [float(r[0].replace(",", ".")) for r in ref], rtol=1e-12)
    assert_allclose(t.columns["tension"], [float(r[1].replace(",", ".")) * 1e-3 for r in ref], rtol=1e-12)
    assert list(t.columns["notes"]) == [r[2] for r in ref]


def test_semicolon_file_with_decimal_points_and_a_comma_inside_a_unit_free_text(tmp_path):
    p = write(tmp_path, "concentration [mM];tension [mN/m];notes\n0.01;70.2;fresh, clear\n"
                        "0,02;68,25;old\n")
    t = read_lab_csv(p, DIMS)
    assert_allclose(t.columns["concentration"], [0.01, 0.02], rtol=1e-12)  # SI Brochure: mM = mol/m**3
    assert_allclose(t.columns["tension"], [0.0702, 0.06825], rtol=1e-12)  # SI Brochure: mN/m = 1e-3 N/m
    assert list(t.columns["notes"]) == ["fresh, clear", "old"]


@pytest.mark.parametrize("decimal", [".", ","])
def test_tab_separated(tmp_path, decimal):
    rows = "".join(f"{repr(c).replace('.', decimal)}\t{repr(g).replace('.', decimal)}\t25\n"
                   for c, g in zip(C_MM, G_MNM))
    t = read_lab_csv(write(tmp_path, "concentration [mM]\ttension [mN/m]\ttemperature [degC]\n" + rows),
                     DIMS)
    ref = read_lab_csv(comma_file(tmp_path), DIMS)
    for k in ("concentration", "tension"):
        assert_allclose(t.columns[k], ref.columns[k], rtol=1e-12)
    assert_allclose(t.columns["temperature"], 298.15, rtol=1e-12)  # SI Brochure: 25 degC = 298.15 K


def test_detect_separator():
    assert detect_separator("concentration [mM];tension [mN/m]") == ";"
    assert detect_separator("concentration [mM],tension [mN/m]") == ","
    assert detect_separator("a\tb\tc") == "\t"
    assert detect_separator("upper [um]") == ","
    assert detect_separator('"size, upper [um]";volume [%]') == ";"  # quoted ',' does not count
    assert detect_separator("rate [mol;m],x,y") == ","  # inside brackets does not count


def test_comments_blank_lines_and_bom_before_a_semicolon_header(tmp_path):
    p = tmp_path / "eu.csv"
    p.write_text("# exported 2024-05-01, lab 2\n\nupper [um];volume [%]\n1,5;40\n# mid\n3;60\n",
                 encoding="utf-8-sig")
    t = read_lab_csv(p, {"upper": "length"})
    assert_allclose(t.columns["upper"], [1.5e-6, 3e-6], rtol=1e-12)  # SI Brochure: 1 um = 1e-6 m
    assert_allclose(t.columns["volume"], [40.0, 60.0], rtol=1e-12)  # free '%' column kept in percent


# ------------------------------------------------------------------ decimal commas in ',' files
def test_quoted_decimal_commas_give_one_line_per_column_with_the_fix(tmp_path):
    rows = "".join(f'"{repr(c).replace(".", ",")}","{repr(g).replace(".", ",")}"\n'
                   for c, g in zip(C_MM * 6, G_MNM * 6))  # 30 rows
    p = write(tmp_path, "concentration [mM],tension [mN/m]\n" + rows)
    with pytest.raises(InputError) as e:
        read_lab_csv(p, DIMS)
    probs = e.value.problems
    assert len(probs) == 2
    assert probs[0].startswith(f"{p}: column 'concentration [mM]', from row 2")
    assert "'0,01'" in probs[0]
    assert probs[1].startswith(f"{p}: column 'tension [mN/m]', from row 2")
    for line in probs:
        assert "use a decimal comma; write '.' as the decimal point, or save the CSV with ';' " \
               "as the separator" in line
    assert "is not a number" not in str(e.value)


def test_quoted_exponent_with_decimal_comma_names_its_first_row(tmp_path):
    p = write(tmp_path, 'concentration [mM],tension [mN/m]\n0.01,70.2\n"9,676e-05",71.9\n'
                        '"1,5e-03",71.0\n')
    with pytest.raises(InputError) as e:
        read_lab_csv(p, DIMS)
    assert e.value.problems == [
        f"{p}: column 'concentration [mM]', from row 3 (2 cells): values like '9,676e-05' use a "
        "decimal comma; write '.' as the decimal point, or save the CSV with ';' as the separator"]


def test_unquoted_decimal_commas_are_caught_not_misread(tmp_path):
    # pandas alone would take the extra leading cells as an index and shift the columns
    p = write(tmp_path, "concentration [mM],tension [mN/m]\n" +
              "".join(f"{c},{g}\n" for c, g in (("0,01", "70,2"), ("9,676e-05", "71,9"))))
    with pytest.raises(InputError) as e:
        read_lab_csv(p, DIMS)
    assert len(e.value.problems) == 1
    msg = e.value.problems[0]
    assert msg.startswith(f"{p}: row 2 has 4 cells but the header has 2 columns separated by ','")
    assert "(2 rows like this)" in msg
    assert "values like '0,01' use a decimal comma; write '.' as the decimal point" in msg


def test_one_extra_cell_per_row_is_an_error(tmp_path):
    p = write(tmp_path, "concentration [mM],tension [mN/m]\n0.01,70,2\n")
    with pytest.raises(InputError, match=r"row 2 has 3 cells but the header has 2 columns.*'70,2'"):
        read_lab_csv(p, DIMS)
    p = write(tmp_path, "concentration [mM],tension [mN/m]\n0.01,70.2,x\n")
    with pytest.raises(InputError, match=r"row 2 has 3 cells .*; expected one cell per header column$"):
        read_lab_csv(p, DIMS)


def test_trailing_separator_on_the_header_only_is_ignored(tmp_path):
    t = read_lab_csv(write(tmp_path, "concentration [mM],tension [mN/m],\n0.01,70.2\n"), DIMS)
    assert set(t.columns) == {"concentration", "tension"}


# ------------------------------------------------------------------ many bad cells
def test_many_bad_cells_are_summarised(tmp_path):
    rows = "".join(f"{c},n/a\n" for c in np.linspace(0.01, 1.0, 30))
    p = write(tmp_path, "concentration [mM],tension [mN/m]\n" + rows)
    with pytest.raises(InputError) as e:
        read_lab_csv(p, DIMS)
    assert e.value.problems == [
        f"{p}: row 2, column 'tension [mN/m]': 'n/a' is not a number",
        f"{p}: row 3, column 'tension [mN/m]': 'n/a' is not a number",
        f"{p}: row 4, column 'tension [mN/m]': 'n/a' is not a number",
        f"{p}: column 'tension [mN/m]': ... and 27 more in this column (up to row 31) that are not "
        "numbers",
    ]


def test_three_bad_cells_are_all_listed(tmp_path):
    p = write(tmp_path, "concentration [mM],tension [mN/m]\n0.01,a\n0.02,b\n0.03,c\n0.04,70\n")
    with pytest.raises(InputError) as e:
        read_lab_csv(p, DIMS)
    assert len(e.value.problems) == 3
    assert "more in this column" not in str(e.value)


# ------------------------------------------------------------------ header problems
def test_missing_unit_gives_one_line(tmp_path):
    p = write(tmp_path, "concentration,tension [mN/m]\n0.01,70.2\n")
    with pytest.raises(InputError) as e:
        read_lab_csv(p, DIMS, required=("concentration", "tension"))
    assert e.value.problems == [
        f"{p}: column 'concentration' has no unit; write it in brackets, e.g. 'concentration [unit]'"]


def test_missing_unit_and_a_really_missing_column(tmp_path):
    p = write(tmp_path, "water_concentration,oil [mM]\n0.01,0.2\n")
    dims = {"water_concentration": "concentration", "oil_concentration": "concentration"}
    with pytest.raises(InputError) as e:
        read_lab_csv(p, dims, required=("water_concentration", "oil_concentration"))
    probs = e.value.problems
    assert len(probs) == 2
    assert "column 'water_concentration' has no unit" in probs[0]
    assert probs[1] == f"{p}: missing column(s) oil_concentration; found water_concentration, oil"


def test_header_cell_error_uses_the_callers_first_column(tmp_path):
    p = write(tmp_path, "concentration [mM,tension [mN/m]\n0.01,70.2\n")
    with pytest.raises(InputError) as e:
        read_lab_csv(p, DIMS)
    assert e.value.problems == [f"{p}: header cell 'concentration [mM': expected 'name [unit]', "
                                "e.g. 'concentration [mol/m**3]'"]
    p = write(tmp_path, "upper [um,volume [%]\n1,100\n")
    with pytest.raises(InputError, match=r"e\.g\. 'upper \[m\]'$"):
        read_lab_csv(p, {"upper": "length"})


def test_split_header_generic_example():
    with pytest.raises(InputError, match=r"expected 'name \[unit\]', e\.g\. 'upper \[um\]' or "
                                         r"'tension \[mN/m\]'$"):
        split_header("x [a] b")
    assert split_header("Tension [ mN/m ]") == ("tension", "mN/m")


def test_duplicate_measured_column(tmp_path):
    p = write(tmp_path, "tension [mN/m],Tension [mN/m]\n70,71\n")
    with pytest.raises(InputError, match=r"columns 'tension \[mN/m\]' and 'Tension \[mN/m\]' are "
                                         r"both 'tension'"):
        read_lab_csv(p, DIMS)


# ------------------------------------------------------------------ behaviour kept
def test_existing_messages_still_hold(tmp_path):
    with pytest.raises(InputError, match=r"file not found"):
        read_lab_csv(tmp_path / "nope.csv", DIMS)
    with pytest.raises(InputError, match=r"no data rows below the header"):
        read_lab_csv(write(tmp_path, "concentration [mM],tension [mN/m]\n"), DIMS)
    p = write(tmp_path, "concentration [mM],tension [mN/m]\n0.01,70\n0.02,68\n0.03,abc\n")
    with pytest.raises(InputError, match=r"row 4, column 'tension \[mN/m\]': 'abc' is not a number"):
        read_lab_csv(p, DIMS)
    p = write(tmp_path, "dose [umol],area [m**2]\n1,2\n")
    with pytest.raises(InputError, match=r"missing column\(s\) continuous_volume; found dose, area"):
        read_lab_csv(p, {"dose": "amount", "area": "area"}, required=("continuous_volume",))
    p = write(tmp_path, "concentration [mM],tension [furlong]\n0.01,70\n")
    with pytest.raises(InputError, match=r"column 'tension \[furlong\]'"):
        read_lab_csv(p, DIMS)


def test_size_limit_kept(tmp_path):
    p = tmp_path / "big.csv"
    line = "upper [um],volume [%]\n"
    p.write_text(line + "1.0,1.0\n" * (MAX_BYTES // 8 + 10))
    with pytest.raises(InputError, match=r"at most 5 MB is accepted"):
        read_lab_csv(p, {"upper": "length"})


def test_text_columns_replicate_and_empty_cells(tmp_path):
    p = write(tmp_path, "concentration [mM],tension [mN/m],replicate,notes\n"
                        "0.01,70.2,1,first # a comment\n0.02,,2,\n")
    t = read_lab_csv(p, DIMS)
    assert list(t.columns["notes"]) == ["first", ""]
    assert_allclose(t.columns["replicate"], [1.0, 2.0], rtol=0)
    assert np.isnan(t.columns["tension"][1])
    assert len(t) == 2
    assert t.units["replicate"] == "" and t.units["notes"] == ""


def test_windows_1252_export_is_read(tmp_path):
    # A spreadsheet export in Windows-1252 with 'µm' in the header (byte 0xB5): read as text,
    # the unit parsed like 'um' (sizing.units maps µ to u).
    p = tmp_path / "sizes.csv"
    p.write_bytes("upper [µm];volume [%]\n1;10\n2;40\n4;40\n8;10\n".encode("cp1252"))
    from sizing.labcsv import read_lab_csv

    t = read_lab_csv(p, {"upper": "length"})
    np.testing.assert_allclose(t.columns["upper"], [1e-6, 2e-6, 4e-6, 8e-6], rtol=1e-12)
