"""Measured dose–response data: validated arrays plus what the numbers mean.

`DoseResponseData` is the container every fitting routine takes. It is built from a CSV file by
`hairtrigger.io.load_data` (which names file rows in its error messages) or directly from arrays
with `DoseResponseData.from_arrays` (which names point indices).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, Final

import numpy as np
from numpy.typing import ArrayLike, NDArray

FloatArray = NDArray[np.float64]

#: What the ``input`` column holds: an activity ratio V1/V2, or an amount in any unit
#: proportional to kinase activity (then the cycle models fit an ``input_scale``).
INPUT_KINDS: Final[tuple[str, ...]] = ("ratio", "amount")


def describe_rows(rows: Sequence[int], label: str = "row") -> str:
    """Return a short human description of a set of row numbers, e.g. ``rows 2-9``."""
    rows = sorted(rows)
    if not rows:
        return f"no {label}s"
    if len(rows) == 1:
        return f"{label} {rows[0]}"
    if rows == list(range(rows[0], rows[-1] + 1)):
        return f"{label}s {rows[0]}-{rows[-1]}"
    shown = ", ".join(str(r) for r in rows[:6])
    return f"{label}s {shown}{', …' if len(rows) > 6 else ''}"


@dataclass(frozen=True, eq=False)
class DoseResponseData:
    """A validated dose–response data set (one point per measurement, replicates kept).

    Attributes
    ----------
    input : ndarray, shape (n,)
        Finite, non-negative input values (activity ratio, or an amount in `input_unit`).
    readout : ndarray, shape (n,)
        Finite readout values in `readout_unit` (any sign; an assay scale is fitted).
    sd : ndarray, shape (n,), or None
        Standard deviation of each readout (> 0), if known; fits are then weighted by 1/sd².
    replicate : tuple of str, or None
        Replicate label of each point, kept as text.
    input_kind : {"ratio", "amount"}
        What `input` holds.
    input_unit, readout_unit : str
        Declared units (free text; ``"1"`` for a ratio).
    input_kind_declared : bool
        False when `input_kind` is the default rather than declared by the user.
    rows : tuple of int
        Where each point came from: file row numbers (as a spreadsheet counts them, header and
        comment lines included) or 1-based point indices.
    row_label : str
        ``"row"`` for file data, ``"point"`` for arrays; used in messages.
    source : str
        File name or ``"<arrays>"``.
    metadata : dict
        Every ``# key: value`` line of the file (declared units included).
    extra_columns : dict
        Columns other than the known four, kept as text, keyed by header name.
    """

    input: FloatArray
    readout: FloatArray
    sd: FloatArray | None = None
    replicate: tuple[str, ...] | None = None
    input_kind: str = "ratio"
    input_unit: str = "1"
    readout_unit: str = "a.u."
    input_kind_declared: bool = False
    rows: tuple[int, ...] = ()
    row_label: str = "point"
    source: str = "<arrays>"
    metadata: dict[str, str] = field(default_factory=dict)
    extra_columns: dict[str, tuple[str, ...]] = field(default_factory=dict)

    def __post_init__(self) -> None:
        n = self.input.shape[0]
        if not self.rows:
            object.__setattr__(self, "rows", tuple(range(1, n + 1)))
        _check_arrays(self.input, self.readout, self.sd, self.rows, self.row_label, self.source)
        if self.input_kind not in INPUT_KINDS:
            msg = f"`input_kind` must be one of 'ratio', 'amount'; got {self.input_kind!r}"
            raise ValueError(msg)
        if self.replicate is not None and len(self.replicate) != n:
            msg = f"`replicate` has {len(self.replicate)} labels for {n} points"
            raise ValueError(msg)

    @classmethod
    def from_arrays(
        cls,
        input: ArrayLike,  # noqa: A002 - the column's name in the data contract
        readout: ArrayLike,
        sd: ArrayLike | None = None,
        replicate: Sequence[Any] | None = None,
        *,
        input_kind: str | None = None,
        input_unit: str | None = None,
        readout_unit: str | None = None,
    ) -> DoseResponseData:
        """Validate arrays and build a data set; errors name the bad point (1-based).

        Parameters
        ----------
        input, readout : array_like, shape (n,)
            Inputs (finite, >= 0) and readouts (finite).
        sd : array_like, shape (n,), optional
            Readout standard deviations (finite, > 0).
        replicate : sequence, optional
            Replicate labels (converted to text).
        input_kind : {"ratio", "amount"}, optional
            Default ``"ratio"`` (activity ratio V1/V2).
        input_unit, readout_unit : str, optional
            Declared units; defaults ``"1"`` for a ratio, ``"a.u."`` otherwise.

        Returns
        -------
        DoseResponseData
        """
        arrays = {}
        for name, values in (("input", input), ("readout", readout), ("sd", sd)):
            if values is None:
                continue
            try:
                arr = np.asarray(values, dtype=float)
            except (TypeError, ValueError) as exc:
                msg = f"`{name}` must be an array of numbers ({exc})"
                raise ValueError(msg) from exc
            if arr.ndim != 1:
                msg = f"`{name}` must be one-dimensional; got shape {arr.shape}"
                raise ValueError(msg)
            arrays[name] = arr
        n = arrays["input"].shape[0]
        for name, arr in arrays.items():
            if arr.shape[0] != n:
                msg = f"`{name}` has {arr.shape[0]} values but `input` has {n}"
                raise ValueError(msg)
        kind = "ratio" if input_kind is None else input_kind
        if kind not in INPUT_KINDS:
            msg = f"`input_kind` must be one of 'ratio', 'amount'; got {kind!r}"
            raise ValueError(msg)
        return cls(
            input=arrays["input"],
            readout=arrays["readout"],
            sd=arrays.get("sd"),
            replicate=None if replicate is None else tuple(str(r) for r in replicate),
            input_kind=kind,
            input_unit=input_unit or ("1" if kind == "ratio" else "a.u."),
            readout_unit=readout_unit or "a.u.",
            input_kind_declared=input_kind is not None,
        )

    @property
    def n_points(self) -> int:
        """Number of measurements (replicates counted separately)."""
        return int(self.input.shape[0])

    @property
    def weighted(self) -> bool:
        """True when standard deviations are known."""
        return self.sd is not None

    def with_input_kind(self, input_kind: str, input_unit: str | None = None) -> DoseResponseData:
        """Return a copy declaring what the input holds."""
        if input_kind not in INPUT_KINDS:
            msg = f"`input_kind` must be one of 'ratio', 'amount'; got {input_kind!r}"
            raise ValueError(msg)
        unit = input_unit or (self.input_unit if input_kind == self.input_kind else None)
        unit = unit or ("1" if input_kind == "ratio" else "a.u.")
        return DoseResponseData(
            input=self.input,
            readout=self.readout,
            sd=self.sd,
            replicate=self.replicate,
            input_kind=input_kind,
            input_unit=unit,
            readout_unit=self.readout_unit,
            input_kind_declared=True,
            rows=self.rows,
            row_label=self.row_label,
            source=self.source,
            metadata=dict(self.metadata),
            extra_columns=dict(self.extra_columns),
        )

    def as_dict(self) -> dict[str, Any]:
        """Plain-value summary (for JSON and widgets)."""
        return {
            "source": self.source,
            "n_points": self.n_points,
            "input_kind": self.input_kind,
            "input_unit": self.input_unit,
            "readout_unit": self.readout_unit,
            "weighted": self.weighted,
            "replicates": sorted(set(self.replicate)) if self.replicate else [],
        }


def _check_arrays(
    x: FloatArray,
    y: FloatArray,
    sd: FloatArray | None,
    rows: Sequence[int],
    label: str,
    source: str,
) -> None:
    """Validate data arrays, naming the first bad point and its column."""
    where = "" if source == "<arrays>" else f"{source}: "
    if x.shape[0] == 0:
        msg = f"{where}no data points"
        raise ValueError(msg)
    checks: list[tuple[str, FloatArray | None, str]] = [
        ("input", x, "nonneg"),
        ("readout", y, "finite"),
        ("sd", sd, "positive"),
    ]
    for name, arr, rule in checks:
        if arr is None:
            continue
        bad = ~np.isfinite(arr)
        if rule == "nonneg":
            bad |= ~(arr >= 0.0)
        elif rule == "positive":
            bad |= ~(arr > 0.0)
        if np.any(bad):
            i = int(np.flatnonzero(bad)[0])
            need = {
                "nonneg": "a finite number >= 0",
                "finite": "a finite number",
                "positive": "a finite number > 0",
            }[rule]
            msg = f"{where}{label} {rows[i]}, column '{name}': {arr[i]!r} is not {need}"
            raise ValueError(msg)
    if np.all(y == y[0]):
        msg = (
            f"{where}column 'readout': all readouts are equal ({y[0]:g}) in "
            f"{describe_rows(rows, label)}; a flat response has nothing to fit"
        )
        raise ValueError(msg)


def as_dose_response_data(data: Any) -> DoseResponseData:
    """Accept a `DoseResponseData` or a mapping with ``input``, ``readout`` (``sd`` …) arrays."""
    if isinstance(data, DoseResponseData):
        return data
    if isinstance(data, Mapping):
        unknown = sorted(
            set(data)
            - {"input", "readout", "sd", "replicate", "input_kind", "input_unit", "readout_unit"}
        )
        if unknown:
            msg = f"`data` has unknown key '{unknown[0]}'"
            raise ValueError(msg)
        missing = [k for k in ("input", "readout") if k not in data]
        if missing:
            msg = f"`data` is missing '{missing[0]}'"
            raise ValueError(msg)
        return DoseResponseData.from_arrays(**data)
    msg = (
        "`data` must be a DoseResponseData (see hairtrigger.io.load_data) or a mapping with "
        f"'input' and 'readout' arrays; got {type(data).__name__}"
    )
    raise TypeError(msg)
