"""Import measured dose–response data from CSV.

File format (UTF-8 text; comma, tab or semicolon separated)::

    # title: invented titration of kinase X
    # input_kind: amount
    # input_unit: nM
    # readout_unit: a.u.
    input,readout,sd,replicate
    0,0.021,0.01,A
    0.5,0.043,0.01,A
    ...

* Header: ``input`` and ``readout`` are required; ``sd`` (standard deviation of the readout,
  > 0; the fit is then weighted) and ``replicate`` (any label) are optional. Names are
  case-insensitive; other columns are kept as text. A unit can ride on the header name,
  ``input [nM]`` or ``input (nM)``. An input unit other than a ratio's (``1``) implies
  ``input_kind: amount`` when the kind is not declared.
* Comment lines start with ``#``. Before the header, a comment of the form ``# key: value``
  (or ``key = value``) declares metadata: ``input_kind`` (``ratio``: the input is the activity
  ratio V1/V2; ``amount``: any quantity proportional to kinase activity, for which the cycle
  models fit a scale factor), ``input_unit``, ``readout_unit``, ``title`` and any other key,
  which is kept.
* One row per measurement; replicates are separate rows sharing an input. Inputs are finite and
  >= 0; readouts finite (background-subtracted negatives allowed); sd finite and > 0 in every row
  when the column is present.

Every error names the row (counted as a spreadsheet counts them: header and comment lines
included) and the column, and raises `DataError` (a `ValueError`) carrying both.
"""

from __future__ import annotations

import csv
import os
import re
from collections.abc import Sequence
from pathlib import Path
from typing import Final

import numpy as np

from ..core.dataset import INPUT_KINDS, DoseResponseData
from .examples import EXAMPLES_DIR

#: Columns with a meaning; every other column is kept as text.
KNOWN_COLUMNS: Final[tuple[str, ...]] = ("input", "readout", "sd", "replicate")
REQUIRED_COLUMNS: Final[tuple[str, ...]] = ("input", "readout")
#: Metadata keys with a meaning (others are kept in `DoseResponseData.metadata`).
METADATA_KEYS: Final[tuple[str, ...]] = ("input_kind", "input_unit", "readout_unit", "title")

_NUMBER = re.compile(r"^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$")
_DECIMAL_COMMA = re.compile(r"^[+-]?\d+,\d+$")
_METADATA = re.compile(r"^#\s*([A-Za-z_][A-Za-z0-9_]*)\s*[:=]\s*(.*?)\s*$")
_HEADER_UNIT = re.compile(r"^(.*?)\s*[\[(]\s*(.*?)\s*[\])]$")


class DataError(ValueError):
    """A problem in a data file, located by `row` (1-based, or None) and `column` (or None)."""

    def __init__(self, message: str, row: int | None = None, column: str | None = None):
        super().__init__(message)
        self.row = row
        self.column = column


def list_example_data() -> list[str]:
    """Return the names of the bundled example data files (invented data, ``.csv``)."""
    return sorted(path.name for path in EXAMPLES_DIR.glob("*.csv"))


def example_data_path(name: str) -> Path:
    """Return the path of a bundled example data file (with or without ``.csv``).

    The examples are invented for demonstrations and are never check values.

    Examples
    --------
    >>> example_data_path("invented_kinase_titration").name
    'invented_kinase_titration.csv'
    """
    if not isinstance(name, str):
        msg = f"`name` must be a string; got {type(name).__name__}"
        raise TypeError(msg)
    file_name = name if name.endswith(".csv") else f"{name}.csv"
    names = list_example_data()
    if file_name not in names:
        msg = f"no example data file named `{name}`; available: {', '.join(names)}"
        raise ValueError(msg)
    return EXAMPLES_DIR / file_name


def load_data(
    path: str | os.PathLike[str],
    *,
    input_kind: str | None = None,
    input_unit: str | None = None,
    readout_unit: str | None = None,
) -> DoseResponseData:
    """Read a dose–response CSV file (format in the module docstring).

    Parameters
    ----------
    path : path-like
        The CSV file.
    input_kind : {"ratio", "amount"}, optional
        What the input column holds, if the file does not say (``ratio`` by default). When both
        declare it they must agree.
    input_unit, readout_unit : str, optional
        Units, if the file does not declare them; when both do they must agree.

    Returns
    -------
    DoseResponseData

    Raises
    ------
    DataError
        Naming the row and column of the first problem.
    OSError
        If the file cannot be read.
    """
    p = Path(path)
    raw = p.read_bytes()
    return parse_data(
        raw,
        source=p.name,
        input_kind=input_kind,
        input_unit=input_unit,
        readout_unit=readout_unit,
    )


def parse_data(
    content: str | bytes,
    *,
    source: str = "<text>",
    input_kind: str | None = None,
    input_unit: str | None = None,
    readout_unit: str | None = None,
) -> DoseResponseData:
    """Parse dose–response CSV content (pasted text, an upload's bytes, a file's bytes).

    Parameters are as in `load_data`; `source` names the content in messages.
    """
    text = _decode(content, source) if isinstance(content, bytes) else content
    return _Parser(source).parse(text, input_kind, input_unit, readout_unit)


def _decode(raw: bytes, source: str) -> str:
    """Decode UTF-8 (with or without a byte-order mark), locating a bad byte by row and column."""
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")):
        msg = f"{source}: row 1: the file is UTF-16 encoded; save it as UTF-8 (CSV UTF-8)"
        raise DataError(msg, row=1)
    body = raw[3:] if raw.startswith(b"\xef\xbb\xbf") else raw
    try:
        return body.decode("utf-8")
    except UnicodeDecodeError as exc:
        row = body.count(b"\n", 0, exc.start) + 1
        line_start = body.rfind(b"\n", 0, exc.start) + 1
        column = _column_at(body, line_start, exc.start)
        where = f"row {row}" + (f", column '{column}'" if column else "")
        msg = (
            f"{source}: {where}: byte 0x{body[exc.start]:02x} is not valid UTF-8; save the file "
            "as UTF-8 (CSV UTF-8)"
        )
        raise DataError(msg, row=row, column=column) from None


def _column_at(body: bytes, line_start: int, position: int) -> str | None:
    """Header name of the cell containing byte `position`, if the header decodes."""
    prefix = body[:line_start].decode("utf-8", errors="replace").splitlines()
    header = next((ln for ln in prefix if ln.strip() and not ln.lstrip().startswith("#")), None)
    if header is None:
        return None
    delimiter = _delimiter(header)
    names = [_split_unit(c)[0] for c in header.split(delimiter)]
    index = body[line_start:position].count(delimiter.encode())
    return names[index] if index < len(names) else None


def _delimiter(header: str) -> str:
    for candidate in (",", "\t", ";"):
        if candidate in header:
            return candidate
    return ","


def _split_unit(cell: str) -> tuple[str, str | None]:
    """``'Input [nM]'`` → ``('input', 'nM')``; ``'readout'`` → ``('readout', None)``."""
    cell = cell.strip().strip('"').strip()
    match = _HEADER_UNIT.match(cell)
    if match and match.group(1):
        return match.group(1).strip().lower(), match.group(2) or None
    return cell.lower(), None


class _Parser:
    """One pass over the lines of a data file, collecting columns and metadata."""

    def __init__(self, source: str):
        self.source = source

    def fail(self, message: str, row: int | None = None, column: str | None = None) -> DataError:
        where = []
        if row is not None:
            where.append(f"row {row}")
        if column is not None:
            where.append(f"column '{column}'")
        prefix = f"{self.source}: " + (", ".join(where) + ": " if where else "")
        return DataError(prefix + message, row=row, column=column)

    def parse(
        self,
        text: str,
        input_kind: str | None,
        input_unit: str | None,
        readout_unit: str | None,
    ) -> DoseResponseData:
        lines = text.splitlines()
        if not any(ln.strip() for ln in lines):
            raise self.fail("the file is empty (expected a header line with 'input,readout')", 1)
        metadata: dict[str, str] = {}
        metadata_rows: dict[str, int] = {}
        header_row = 0
        for number, line in enumerate(lines, start=1):
            stripped = line.strip()
            if not stripped:
                continue
            if stripped.startswith("#"):
                match = _METADATA.match(stripped)
                if match:
                    key = match.group(1).lower()
                    if key in metadata:
                        raise self.fail(f"metadata '{key}' is declared twice", number, None)
                    metadata[key] = match.group(2)
                    metadata_rows[key] = number
                continue
            header_row = number
            break
        if header_row == 0:
            raise self.fail(
                "no header line (expected 'input,readout' after the comments)", len(lines)
            )
        header_line = lines[header_row - 1]
        delimiter = _delimiter(header_line)
        columns, header_units = self._header(header_line, delimiter, header_row)

        cells: dict[str, list[str]] = {name: [] for name in columns}
        rows: list[int] = []
        for number in range(header_row + 1, len(lines) + 1):
            line = lines[number - 1]
            if not line.strip() or line.lstrip().startswith("#"):
                continue
            values = self._cells(line, delimiter, number)
            if len(values) > len(columns) and not any(v.strip() for v in values[len(columns) :]):
                values = values[: len(columns)]
            if len(values) != len(columns):
                raise self.fail(
                    f"{len(values)} cells but the header (row {header_row}) has "
                    f"{len(columns)} columns",
                    number,
                )
            for name, value in zip(columns, values, strict=True):
                cells[name].append(value.strip())
            rows.append(number)
        if not rows:
            raise self.fail("the file has a header but no data rows", header_row)

        x = self._numbers(cells, "input", rows, minimum="nonneg")
        y = self._numbers(cells, "readout", rows, minimum=None)
        sd = self._numbers(cells, "sd", rows, minimum="positive") if "sd" in cells else None
        if np.all(y == y[0]):
            raise self.fail(
                f"all {len(rows)} readouts are equal ({y[0]:g}, rows {rows[0]}-{rows[-1]}); a "
                "flat response has nothing to fit",
                None,
                "readout",
            )

        kind = self._resolve("input_kind", input_kind, metadata, metadata_rows, None)
        if kind is not None and kind.lower() not in INPUT_KINDS:
            row = metadata_rows.get("input_kind")
            raise self.fail(
                f"input_kind must be 'ratio' or 'amount'; got {kind!r}",
                row,
                None if row else "input",
            )
        kind = None if kind is None else kind.lower()
        in_unit = self._resolve(
            "input_unit",
            input_unit,
            metadata,
            metadata_rows,
            (header_units.get("input"), header_row),
        )
        ratio_units = (None, "1", "", "ratio", "dimensionless")
        out_unit = self._resolve(
            "readout_unit",
            readout_unit,
            metadata,
            metadata_rows,
            (header_units.get("readout"), header_row),
        )
        if kind == "ratio" and in_unit not in ratio_units:
            raise self.fail(
                f"input_kind is 'ratio' (dimensionless) but the input unit is {in_unit!r}; use "
                "input_kind 'amount' for a dose in units",
                metadata_rows.get("input_unit", header_row),
                "input",
            )
        if kind is None and in_unit not in ratio_units:
            kind = "amount"  # a dose with a unit is an amount, not an activity ratio
        resolved_kind = kind or "ratio"
        extra = {name: tuple(values) for name, values in cells.items() if name not in KNOWN_COLUMNS}
        return DoseResponseData(
            input=x,
            readout=y,
            sd=sd,
            replicate=tuple(cells["replicate"]) if "replicate" in cells else None,
            input_kind=resolved_kind,
            input_unit=in_unit or ("1" if resolved_kind == "ratio" else "a.u."),
            readout_unit=out_unit or "a.u.",
            input_kind_declared=kind is not None,
            rows=tuple(rows),
            row_label="row",
            source=self.source,
            metadata=metadata,
            extra_columns=extra,
        )

    def _header(self, line: str, delimiter: str, row: int) -> tuple[list[str], dict[str, str]]:
        raw = self._cells(line, delimiter, row)
        while raw and not raw[-1].strip():
            raw.pop()
        names: list[str] = []
        units: dict[str, str] = {}
        for position, cell in enumerate(raw, start=1):
            name, unit = _split_unit(cell)
            if not name:
                raise self.fail(f"header cell {position} is empty; every column needs a name", row)
            if name in names:
                raise self.fail(f"column '{name}' appears twice in the header", row, name)
            names.append(name)
            if unit is not None:
                units[name] = unit
        missing = [c for c in REQUIRED_COLUMNS if c not in names]
        if missing:
            found = ", ".join(repr(n) for n in names)
            raise self.fail(
                f"missing column '{missing[0]}' (the header has {found}; required: input, "
                "readout; optional: sd, replicate)",
                row,
                missing[0],
            )
        return names, units

    def _cells(self, line: str, delimiter: str, row: int) -> list[str]:
        try:
            return next(csv.reader([line], delimiter=delimiter, strict=True))
        except (csv.Error, StopIteration) as exc:
            raise self.fail(f"cannot split the line into cells ({exc})", row) from None

    def _numbers(
        self, cells: dict[str, list[str]], column: str, rows: Sequence[int], minimum: str | None
    ) -> np.ndarray:
        out = np.empty(len(rows))
        for i, (row, text) in enumerate(zip(rows, cells[column], strict=True)):
            if not text:
                extra = (
                    " (when the sd column is present every row needs one)" if column == "sd" else ""
                )
                raise self.fail(f"empty cell{extra}", row, column)
            if not _NUMBER.match(text):
                if text.lower().lstrip("+-") in ("nan", "inf", "infinity", "na", "n/a"):
                    raise self.fail(f"{text!r} is not a finite number", row, column)
                hint = " (use a decimal point, not a comma)" if _DECIMAL_COMMA.match(text) else ""
                raise self.fail(f"{text!r} is not a number{hint}", row, column)
            value = float(text)
            if not np.isfinite(value):
                raise self.fail(f"{text!r} is not a finite number", row, column)
            if minimum == "nonneg" and value < 0.0:
                raise self.fail(f"{text} is negative; inputs must be >= 0", row, column)
            if minimum == "positive" and value <= 0.0:
                raise self.fail(
                    f"{text} is not > 0; a standard deviation must be positive", row, column
                )
            out[i] = value
        return out

    def _resolve(
        self,
        key: str,
        argument: str | None,
        metadata: dict[str, str],
        metadata_rows: dict[str, int],
        header: tuple[str | None, int] | None,
    ) -> str | None:
        """Merge a declaration from the caller, the metadata lines and the header; must agree."""
        declared: list[tuple[str, str, int | None]] = []
        if key in metadata:
            declared.append((metadata[key], "the metadata line", metadata_rows[key]))
        if header is not None and header[0] is not None:
            declared.append((header[0], "the header", header[1]))
        if argument is not None:
            declared.append((argument, "the caller", None))
        values = {d[0].strip().lower() if key == "input_kind" else d[0].strip() for d in declared}
        if len(values) > 1:
            said = "; ".join(f"{where} says {value!r}" for value, where, _ in declared)
            row = next((r for _, _, r in declared if r is not None), None)
            raise self.fail(f"conflicting {key}: {said}", row, None)
        return declared[0][0].strip() if declared else None
