"""CSV import of dose-response data: good files and every malformed-data path."""

from __future__ import annotations

import numpy as np
import pytest

from hairtrigger.core.dataset import DoseResponseData
from hairtrigger.io.data import DataError, load_data, parse_data

GOOD = """\
# title: invented titration
# input_kind: amount
# input_unit: nM
# readout_unit: a.u.
input,readout,sd,replicate
0,0.02,0.01,A
0.5,0.05,0.01,A
1,0.20,0.02,A
1,0.22,0.02,B
2,0.70,0.02,A
4,0.95,0.01,A
"""


def test_good_file_keeps_replicates_units_and_rows(write_csv):
    data = load_data(write_csv(GOOD))
    assert data.n_points == 6
    np.testing.assert_array_equal(data.input, [0, 0.5, 1, 1, 2, 4])
    np.testing.assert_allclose(data.readout, [0.02, 0.05, 0.2, 0.22, 0.7, 0.95])
    np.testing.assert_allclose(data.sd, [0.01, 0.01, 0.02, 0.02, 0.02, 0.01])
    assert data.replicate == ("A", "A", "A", "B", "A", "A")
    assert (data.input_kind, data.input_unit, data.readout_unit) == ("amount", "nM", "a.u.")
    assert data.input_kind_declared
    assert data.rows == (6, 7, 8, 9, 10, 11)  # spreadsheet rows: comments and header count
    assert data.metadata["title"] == "invented titration"
    assert data.source == "data.csv"


def test_minimal_file_defaults_to_ratio_and_is_unweighted():
    data = parse_data("input,readout\n0.5,0.1\n1,0.5\n2,0.9\n")
    assert data.input_kind == "ratio" and not data.input_kind_declared
    assert data.sd is None and data.replicate is None
    assert data.input_unit == "1" and data.readout_unit == "a.u."


@pytest.mark.parametrize(
    ("text", "delimiter"),
    [
        ("Input;Readout\n0.5;0.1\n1;0.5\n", "semicolon"),
        ("input\treadout\n0.5\t0.1\n1\t0.5\n", "tab"),
        ("INPUT , readout ,\n0.5,0.1,\n1,0.5,\n", "comma with trailing delimiter and spaces"),
    ],
)
def test_delimiters_case_and_trailing_cells(text, delimiter):
    data = parse_data(text)
    np.testing.assert_allclose(data.readout, [0.1, 0.5]), delimiter


def test_units_on_header_names_and_extra_columns_kept():
    data = parse_data(
        "# input_kind: amount\ninput [uM],readout (counts),well\n0.5,10,A1\n1,50,A2\n"
    )
    assert data.input_unit == "uM" and data.readout_unit == "counts"
    assert data.extra_columns == {"well": ("A1", "A2")}


def test_an_input_unit_implies_an_amount():
    data = parse_data("input [nM],readout\n0.5,10\n1,50\n")
    assert data.input_kind == "amount" and data.input_kind_declared and data.input_unit == "nM"


def test_byte_order_mark_blank_lines_and_comments_inside_data():
    raw = "\ufeffinput,readout\n\n0.5,0.1\n# a note between rows\n1,0.5\n".encode()
    data = parse_data(raw)
    assert data.rows == (3, 5)


def test_function_arguments_declare_units_when_file_is_silent(write_csv):
    data = load_data(
        write_csv("input,readout\n0,0.1\n1,0.5\n"),
        input_kind="amount",
        input_unit="ug/mL",
        readout_unit="fraction",
    )
    assert (data.input_kind, data.input_unit, data.readout_unit) == ("amount", "ug/mL", "fraction")


# --- malformed data: (content, expected row, expected column, words in the message) ------------

BAD = [
    pytest.param("", 1, None, "empty", id="empty-file"),
    pytest.param("\n  \n", 1, None, "empty", id="blank-file"),
    pytest.param("# only a comment\n", 1, None, "no header", id="comments-only"),
    pytest.param("input,readout\n", 1, None, "no data rows", id="header-only"),
    pytest.param("input,signal\n1,2\n", 1, "readout", "missing column", id="missing-readout"),
    pytest.param("dose,readout\n1,2\n", 1, "input", "missing column", id="missing-input"),
    pytest.param("input,readout,input\n1,2,3\n", 1, "input", "twice", id="duplicate-column"),
    pytest.param("input,,readout\n1,2,3\n", 1, None, "empty", id="unnamed-column"),
    pytest.param(
        "input,readout\n0,0.1\n1,abc\n", 3, "readout", "not a number", id="non-numeric-readout"
    ),
    pytest.param(
        "input,readout\n0,0.1\nx1,0.2\n", 3, "input", "not a number", id="non-numeric-input"
    ),
    pytest.param(
        "input;readout\n0;0,1\n1;0,5\n", 2, "readout", "decimal point", id="decimal-comma"
    ),
    pytest.param("input,readout\n0,0.1\n1,nan\n", 3, "readout", "finite", id="nan-readout"),
    pytest.param("input,readout\ninf,0.1\n1,0.4\n", 2, "input", "finite", id="inf-input"),
    pytest.param(
        "input,readout\n1_000,0.1\n1,0.4\n", 2, "input", "not a number", id="underscore-number"
    ),
    pytest.param("input,readout\n0,0.1\n-1,0.4\n", 3, "input", "negative", id="negative-input"),
    pytest.param("input,readout\n0,0.1\n,0.4\n", 3, "input", "empty cell", id="empty-input"),
    pytest.param("input,readout,sd\n0,0.1,0.01\n1,0.4,\n", 3, "sd", "every row", id="empty-sd"),
    pytest.param("input,readout,sd\n0,0.1,0\n1,0.4,0.1\n", 2, "sd", "positive", id="zero-sd"),
    pytest.param(
        "input,readout,sd\n0,0.1,-0.1\n1,0.4,0.1\n", 2, "sd", "positive", id="negative-sd"
    ),
    pytest.param("input,readout\n0,0.1\n1,0.4,7\n", 3, None, "3 cells", id="too-many-cells"),
    pytest.param("input,readout,sd\n0,0.1\n", 2, None, "2 cells", id="too-few-cells"),
    pytest.param(
        "input,readout\n0,0.3\n1,0.3\n2,0.3\n",
        None,
        "readout",
        "all 3 readouts are equal",
        id="all-equal-readouts",
    ),
    pytest.param(
        "# input_kind: dose\ninput,readout\n0,0.1\n1,0.4\n",
        1,
        None,
        "ratio' or 'amount",
        id="bad-input-kind",
    ),
    pytest.param(
        "# input_kind: ratio\n# input_unit: nM\ninput,readout\n0,0.1\n1,0.4\n",
        2,
        "input",
        "dimensionless",
        id="ratio-with-unit",
    ),
    pytest.param(
        "# input_unit: nM\ninput [uM],readout\n0,0.1\n1,0.4\n",
        1,
        None,
        "conflicting",
        id="conflicting-units",
    ),
    pytest.param(
        "# title: a\n# title: b\ninput,readout\n0,0.1\n1,0.4\n",
        2,
        None,
        "twice",
        id="duplicate-metadata",
    ),
    pytest.param('input,readout\n0,"0.1\n1,0.4\n', 2, None, "cannot split", id="open-quote"),
]


@pytest.mark.parametrize(("content", "row", "column", "words"), BAD)
def test_malformed_data_names_row_and_column(write_csv, content, row, column, words):
    path = write_csv(content)
    with pytest.raises(DataError) as info:
        load_data(path)
    message = str(info.value)
    assert words in message
    assert message.startswith("data.csv: ")
    assert "\n" not in message
    assert info.value.row == row and info.value.column == column
    if row is not None:
        assert f"row {row}" in message
    if column is not None:
        assert f"column '{column}'" in message


@pytest.mark.parametrize(
    ("raw", "row", "column"),
    [
        pytest.param(b"input,readout\n0,0.1\n1,\xb5\n", 3, "readout", id="latin-1-byte"),
        pytest.param(b"input,readout\n0\xe9,0.1\n", 2, "input", id="latin-1-in-input"),
        pytest.param(b"inp\xffut,readout\n0,0.1\n", 1, None, id="bad-header-byte"),
    ],
)
def test_encoding_errors_name_row_and_column(write_csv, raw, row, column):
    with pytest.raises(DataError) as info:
        load_data(write_csv(raw))
    assert "not valid UTF-8" in str(info.value)
    assert info.value.row == row and info.value.column == column
    assert f"row {row}" in str(info.value)


def test_utf16_file_is_refused_with_advice(write_csv):
    with pytest.raises(DataError, match="UTF-16"):
        load_data(write_csv("input,readout\n0,0.1\n1,0.5\n".encode("utf-16")))


def test_argument_conflicting_with_file_declaration(write_csv):
    path = write_csv("# input_kind: amount\ninput,readout\n0,0.1\n1,0.4\n")
    with pytest.raises(DataError, match="conflicting input_kind"):
        load_data(path, input_kind="ratio")


def test_missing_file_is_an_oserror(tmp_path):
    with pytest.raises(OSError):
        load_data(tmp_path / "absent.csv")


# --- the array constructor validates the same way, naming points ---------------------------


@pytest.mark.parametrize(
    ("kwargs", "words"),
    [
        ({"input": [0, -1, 2], "readout": [0, 1, 2]}, "point 2, column 'input'"),
        ({"input": [0, 1, 2], "readout": [0, np.nan, 2]}, "point 2, column 'readout'"),
        ({"input": [0, 1, 2], "readout": [0, 1, 2], "sd": [1, 1, 0]}, "point 3, column 'sd'"),
        ({"input": [0, 1, 2], "readout": [1, 1, 1]}, "all readouts are equal"),
        ({"input": [0, 1], "readout": [0, 1, 2]}, "`readout` has 3 values"),
        ({"input": [[0, 1]], "readout": [[0, 1]]}, "one-dimensional"),
        ({"input": [], "readout": []}, "no data points"),
        ({"input": ["a", 1], "readout": [0, 1]}, "array of numbers"),
        ({"input": [0, 1], "readout": [0, 1], "input_kind": "dose"}, "input_kind"),
    ],
)
def test_from_arrays_validation(kwargs, words):
    with pytest.raises(ValueError, match=words.replace("(", r"\(")):
        DoseResponseData.from_arrays(**kwargs)
