"""The fitting engine behind `hairtrigger.core.fitting` (private; use that module).

`Problem` holds one model on one data set in fitting coordinates (log scale for positive
parameters); `multistart` finds the optimum from a deterministic Sobol design; `Engine` adds
profile-likelihood or bootstrap intervals, diagnoses identifiability and packs a `FitResult`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any, Final

import numpy as np
from scipy import optimize, stats
from scipy.stats import qmc

from .dataset import DoseResponseData, as_dose_response_data, describe_rows
from .fit_models import ShapeModel
from .fit_results import FitResult, ParameterEstimate, Profile
from .params import check_choice
from .steady import FloatArray

#: Sobol design size (a power of two) and how many of its best points are polished.
START_DESIGN_LOG2: Final[int] = 6
POLISHED_STARTS: Final[int] = 5
#: Seed of the start design: fits are deterministic.
START_SEED: Final[int] = 20_240_611

#: Correlation above which two parameters are reported as not separately determined.
CORRELATION_WARNING: Final[float] = 0.99
#: Condition number of the column-scaled Jacobian above which the fit is called degenerate.
CONDITION_WARNING: Final[float] = 1e8
#: Status codes of a fit.
STATUS_CONVERGED: Final[int] = 0
STATUS_NOT_CONVERGED: Final[int] = 1
STATUS_FAILED: Final[int] = 2


# --- the least-squares problem ------------------------------------------------------------------


@dataclass
class _Solution:
    z: FloatArray
    cost: float  # sum of squared (weighted) residuals
    status: int
    message: str


class Problem:
    """Residuals of one model on one data set in the fitting coordinates z.

    z holds log(value) for positive (shape) parameters and the value itself for ``bottom`` and
    ``top``; `free` marks the parameters being fitted, the others stay at their z value.
    """

    def __init__(
        self,
        model: ShapeModel,
        x: FloatArray,
        y: FloatArray,
        sigma: FloatArray,
        fixed: Mapping[str, float],
    ):
        self.model = model
        self.x = x
        self.y = y
        self.sigma = sigma
        self.k = model.n_shape
        self.names = model.parameter_names
        self.p = len(self.names)
        self.box = model.search_box(x)
        span = float(np.max(y) - np.min(y))
        self.span = span
        margin = 100.0 * span
        self.lower = np.concatenate(
            [np.log(self.box.bound_low), [np.min(y) - margin, np.min(y) - margin]]
        )
        self.upper = np.concatenate(
            [np.log(self.box.bound_high), [np.max(y) + margin, np.max(y) + margin]]
        )
        self.free = np.ones(self.p, dtype=bool)
        self.z_fixed = np.full(self.p, np.nan)
        for name, value in fixed.items():
            j = self.names.index(name)
            self.free[j] = False
            self.z_fixed[j] = math.log(value) if j < self.k else float(value)
        self.x_scale = np.concatenate([np.ones(self.k), [span, span]])
        self.evaluations = 0

    # coordinates
    def theta(self, z: FloatArray) -> FloatArray:
        """Natural parameter values for z (any leading shape)."""
        z = np.asarray(z, dtype=float)
        return np.concatenate([np.exp(z[..., : self.k]), z[..., self.k :]], axis=-1)

    def residuals(self, z: FloatArray) -> FloatArray:
        self.evaluations += 1
        return np.asarray((self.model.predict(self.theta(z), self.x) - self.y) / self.sigma)

    def cost(self, z: FloatArray) -> float:
        r = self.residuals(z)
        return float(r @ r) if np.all(np.isfinite(r)) else math.inf

    def jacobian(self, z: FloatArray, free: np.ndarray) -> FloatArray:
        """Jacobian d residuals / d z over the free coordinates.

        Central differences for the shape parameters (step ~ eps^(1/3) in log space), exact
        columns for the linear assay parameters.
        """
        theta = self.theta(z)
        phi = theta[: self.k]
        bottom, top = theta[self.k], theta[self.k + 1]
        f0 = self.model.shape(phi[None, :], self.x)[0]
        columns = []
        h = 6e-6
        shape_free = [j for j in range(self.k) if free[j]]
        if shape_free:
            steps = np.repeat(phi[None, :], 2 * len(shape_free), axis=0)
            for i, j in enumerate(shape_free):
                steps[2 * i, j] *= math.exp(h)
                steps[2 * i + 1, j] *= math.exp(-h)
            f = self.model.shape(steps, self.x)
            for i in range(len(shape_free)):
                columns.append((top - bottom) * (f[2 * i] - f[2 * i + 1]) / (2 * h))
        if free[self.k]:
            columns.append(1.0 - f0)
        if free[self.k + 1]:
            columns.append(f0)
        jac = np.column_stack(columns) if columns else np.zeros((self.x.size, 0))
        return np.asarray(jac / self.sigma[:, None], dtype=float)

    def solve(self, z_start: FloatArray, free: np.ndarray) -> _Solution:
        """Polish `z_start` by bounded least squares over the `free` coordinates."""
        z = np.clip(np.asarray(z_start, dtype=float).copy(), self.lower, self.upper)
        if not np.any(free):
            return _Solution(z, self.cost(z), STATUS_CONVERGED, "no free parameter")
        idx = np.flatnonzero(free)

        def fun(zf: FloatArray) -> FloatArray:
            full = z.copy()
            full[idx] = zf
            return self.residuals(full)

        def jac(zf: FloatArray) -> FloatArray:
            full = z.copy()
            full[idx] = zf
            return self.jacobian(full, free)

        try:
            with np.errstate(all="ignore"):
                res = optimize.least_squares(
                    fun,
                    z[idx],
                    jac=jac,
                    bounds=(self.lower[idx], self.upper[idx]),
                    method="trf",
                    x_scale=self.x_scale[idx],
                    ftol=1e-12,
                    xtol=1e-12,
                    gtol=1e-12,
                    max_nfev=100 * (idx.size + 1),
                )
        except ValueError as exc:  # non-finite residuals at the start
            return _Solution(z, math.inf, STATUS_FAILED, f"least squares failed: {exc}")
        out = z.copy()
        out[idx] = res.x
        cost = float(2.0 * res.cost)
        if not math.isfinite(cost):
            return _Solution(out, math.inf, STATUS_FAILED, "the model gave no finite prediction")
        status = STATUS_CONVERGED if res.status > 0 else STATUS_NOT_CONVERGED
        return _Solution(out, cost, status, str(res.message))

    # starting values
    def linear_assay(self, f: FloatArray, z_lin: FloatArray) -> tuple[FloatArray, FloatArray]:
        """Weighted least-squares bottom and top for shapes f (m, n); returns (m, 2), cost."""
        w = 1.0 / self.sigma**2
        g0, g1 = 1.0 - f, f
        fb, ft = self.free[self.k], self.free[self.k + 1]
        m = f.shape[0]
        lin = np.broadcast_to(z_lin, (m, 2)).copy()
        y = self.y
        with np.errstate(all="ignore"):
            if fb and ft:
                a00 = (w * g0 * g0).sum(1)
                a01 = (w * g0 * g1).sum(1)
                a11 = (w * g1 * g1).sum(1)
                r0 = (w * g0 * y).sum(1)
                r1 = (w * g1 * y).sum(1)
                det = a00 * a11 - a01 * a01
                lin[:, 0] = (r0 * a11 - r1 * a01) / det
                lin[:, 1] = (a00 * r1 - a01 * r0) / det
            elif fb:
                lin[:, 0] = (w * g0 * (y - g1 * lin[:, 1:2])).sum(1) / (w * g0 * g0).sum(1)
            elif ft:
                lin[:, 1] = (w * g1 * (y - g0 * lin[:, 0:1])).sum(1) / (w * g1 * g1).sum(1)
        lin = np.where(np.isfinite(lin), lin, np.mean(y))
        lin = np.clip(lin, self.lower[self.k :], self.upper[self.k :])
        pred = lin[:, 0:1] * g0 + lin[:, 1:2] * g1
        cost = ((pred - y) ** 2 * w).sum(1)
        return lin, np.where(np.isfinite(cost), cost, np.inf)

    def starts(self) -> FloatArray:
        """Candidate starts (z), best first.

        A scrambled Sobol design over the free shape parameters (deterministic seed), with
        the assay parameters solved exactly by weighted linear least squares at each point.
        """
        shape_free = np.flatnonzero(self.free[: self.k])
        lo = np.log(self.box.start_low)
        hi = np.log(self.box.start_high)
        if shape_free.size:
            sobol = qmc.Sobol(
                d=shape_free.size, scramble=True, rng=np.random.default_rng(START_SEED)
            )
            u = sobol.random_base2(START_DESIGN_LOG2)
            u = np.vstack([np.full((1, shape_free.size), 0.5), u])  # the box centre first
        else:
            u = np.zeros((1, 0))
        z_shape = np.where(self.free[: self.k], 0.5 * (lo + hi), self.z_fixed[: self.k])
        design = np.repeat(z_shape[None, :], u.shape[0], axis=0)
        design[:, shape_free] = lo[shape_free] + u * (hi[shape_free] - lo[shape_free])
        with np.errstate(all="ignore"):
            f = self.model.shape(np.exp(design), self.x)
        z_lin = np.where(
            self.free[self.k :],
            [float(np.min(self.y)), float(np.max(self.y))],
            self.z_fixed[self.k :],
        )
        lin, cost = self.linear_assay(f, z_lin)
        order = np.argsort(cost, kind="stable")
        return np.column_stack([design, lin])[order]


# --- fitting ---------------------------------------------------------------------------------


@dataclass
class _Best:
    solution: _Solution
    others: list[_Solution]


def multistart(problem: Problem) -> _Best:
    candidates = problem.starts()
    polished: list[_Solution] = []
    for z0 in candidates:
        if len(polished) >= POLISHED_STARTS:
            break
        # Skip starts that are near one already polished (same basin, no new information).
        if any(
            np.max(np.abs((z0 - s.z) / np.maximum(problem.x_scale, 1e-300))) < 0.05
            for s in polished
        ):
            continue
        polished.append(problem.solve(z0, problem.free))
    polished.sort(key=lambda s: (s.cost, s.status))
    return _Best(polished[0], polished[1:])


class _Statistic:
    """Profile statistic and its critical value (F-based, or χ² with absolute sd)."""

    def __init__(
        self, cost_min: float, n: int, p: int, absolute: bool, confidence: float, floor: float
    ):
        self.cost_min = cost_min
        self.absolute = absolute
        self.dof = n - p
        if absolute:
            self.scale = 1.0
            self.threshold = float(stats.chi2.ppf(confidence, 1))
        else:
            self.scale = max(cost_min / self.dof, floor)
            self.threshold = float(stats.f.ppf(confidence, 1, self.dof))

    def __call__(self, cost: float) -> float:
        return (cost - self.cost_min) / self.scale


class _BetterFitFound(Exception):
    def __init__(self, solution: _Solution):
        self.solution = solution


def _profile_side(
    problem: Problem,
    j: int,
    best: _Solution,
    statistic: _Statistic,
    direction: int,
    step0: float,
    trace: list[tuple[float, float]],
) -> float | None:
    """End of the interval for coordinate j on one side (z value), or None if open."""
    free = problem.free.copy()
    free[j] = False
    bound = problem.upper[j] if direction > 0 else problem.lower[j]
    warm = best.z.copy()
    tol = 1e-7 * max(1.0, statistic.threshold)

    seen: dict[float, float] = {}

    def evaluate(zj: float) -> float:
        nonlocal warm
        if zj in seen:
            return seen[zj]
        start = warm.copy()
        start[j] = zj
        sol = problem.solve(start, free)
        s = statistic(sol.cost)
        if s < -tol and sol.status == STATUS_CONVERGED:
            raise _BetterFitFound(sol)
        if math.isfinite(s):
            warm = sol.z
        trace.append((zj, s))
        seen[zj] = s
        return s

    previous, step = best.z[j], step0
    for _ in range(60):
        candidate = previous + direction * step
        at_bound = (candidate - bound) * direction >= 0
        if at_bound:
            candidate = bound
        s = evaluate(candidate)
        if s >= statistic.threshold:
            # The signed root of the statistic is nearly linear in the parameter, so Brent's
            # method on it converges in a few evaluations.
            def g(zj: float, root_threshold: float = math.sqrt(statistic.threshold)) -> float:
                return math.sqrt(max(evaluate(zj), 0.0)) - root_threshold

            lo, hi = sorted((previous, candidate))
            try:
                root = optimize.brentq(g, lo, hi, xtol=1e-3 * step0, rtol=1e-12, maxiter=60)
            except ValueError:  # a non-finite statistic inside the bracket
                root = candidate
            return float(root)
        if at_bound:
            return None
        previous = candidate
        step *= 1.6
    return None


@dataclass(frozen=True)
class Linearisation:
    """The fit's local picture: covariance of the free z coordinates and its weakest direction.

    Attributes
    ----------
    cov : ndarray, shape (p_free, p_free)
        Linearised covariance (pseudo-inverse, so finite even when singular).
    condition : float
        Condition number of the Jacobian with unit-norm columns (scale-free).
    weakest : tuple of int
        Free-coordinate columns that carry the least-determined direction (the right singular
        vector of the smallest singular value, components above a third of its largest).
    """

    cov: FloatArray
    condition: float
    weakest: tuple[int, ...]


def linearise(problem: Problem, best: _Solution, statistic: _Statistic) -> Linearisation:
    """Linearised covariance and degeneracy measures at the optimum."""
    jac = problem.jacobian(best.z, problem.free)
    norms = np.linalg.norm(jac, axis=0)
    safe = np.where(norms > 0, norms, 1.0)
    _, sv, vt = np.linalg.svd(jac / safe, full_matrices=False)
    if sv.size == 0 or sv[-1] <= 0 or np.any(norms == 0):
        condition = math.inf
    else:
        condition = float(sv[0] / sv[-1])
    weak = np.abs(vt[-1]) if sv.size else np.zeros(0)
    weakest = tuple(np.flatnonzero(weak > weak.max() / 3).tolist()) if weak.size else ()
    jtj = jac.T @ jac
    cov = np.asarray(np.linalg.pinv(jtj, rcond=1e-13) * statistic.scale, dtype=float)
    return Linearisation(cov, condition, weakest)


def check_fixed(model: ShapeModel, fixed: Mapping[str, Any] | None) -> dict[str, float]:
    out: dict[str, float] = {}
    for name, value in (fixed or {}).items():
        if name not in model.parameter_names:
            msg = f"cannot fix `{name}`: model '{model.name}' has parameters " + ", ".join(
                model.parameter_names
            )
            raise ValueError(msg)
        spec = model.specs[model.parameter_names.index(name)]
        try:
            number = float(value)
        except (TypeError, ValueError):
            number = math.nan
        if not math.isfinite(number) or (spec.positive and number <= 0):
            need = "a finite number > 0" if spec.positive else "a finite number"
            msg = f"fixed `{name}` must be {need}; got {value!r}"
            raise ValueError(msg)
        out[name] = number
    return out


def check_enough(data: DoseResponseData, model: ShapeModel, n_free: int) -> None:
    distinct = np.unique(data.input).size
    n = data.n_points
    if n_free == 0:
        msg = f"every parameter of model '{model.name}' is fixed; nothing to fit"
        raise ValueError(msg)
    if n < n_free + 1 or distinct < n_free:
        where = "" if data.source == "<arrays>" else f"{data.source}: "
        msg = (
            f"{where}column 'input': {n} points at {distinct} distinct inputs "
            f"({describe_rows(data.rows, data.row_label)}) but model '{model.name}' has "
            f"{n_free} free parameters; need at least {n_free + 1} points at {n_free} or more "
            "distinct inputs"
        )
        raise ValueError(msg)
    if not np.any(data.input > 0):
        msg = "column 'input': every input is 0; the response needs positive inputs"
        raise ValueError(msg)


def resolve_data(data: Any, input_kind: str | None) -> DoseResponseData:
    d = as_dose_response_data(data)
    if input_kind is None:
        return d
    check_choice("input_kind", input_kind, ("ratio", "amount"))
    if d.input_kind_declared and d.input_kind != input_kind:
        msg = f"`input_kind` {input_kind!r} conflicts with the data, which declare {d.input_kind!r}"
        raise ValueError(msg)
    return (
        d if d.input_kind == input_kind and d.input_kind_declared else d.with_input_kind(input_kind)
    )


def likelihood(
    cost: float, sigma: FloatArray, weighted: bool, absolute: bool, n: int, p: int
) -> tuple[float, float, float | None, float]:
    """Gaussian log-likelihood, AIC, AICc and BIC at the optimum.

    Scatter estimated (no sd, or sd as relative weights): σ² = cost/n is one more parameter.
    Absolute sd: the likelihood is exact and σ is not estimated.
    """
    log_det = float(np.sum(np.log(sigma**2))) if weighted else 0.0
    if absolute:
        k = p
        m2ll = cost + float(np.sum(np.log(2 * math.pi * sigma**2)))
    else:
        k = p + 1
        s2 = max(cost / n, np.finfo(float).tiny)
        m2ll = n * math.log(2 * math.pi * s2) + log_det + n
    aic = m2ll + 2 * k
    aicc = aic + 2 * k * (k + 1) / (n - k - 1) if n - k - 1 > 0 else None
    bic = m2ll + k * math.log(n)
    return -0.5 * m2ll, aic, aicc, bic


class Engine:
    """Runs one fit: multistart, intervals, diagnostics, and packs the `FitResult`."""

    def __init__(
        self,
        problem: Problem,
        data: DoseResponseData,
        model: ShapeModel,
        confidence: float,
        absolute: bool,
    ):
        self.problem = problem
        self.data = data
        self.model = model
        self.confidence = float(confidence)
        self.absolute = absolute
        self.warnings: list[str] = []

    def statistic(self, best: _Solution) -> _Statistic:
        n_free = int(self.problem.free.sum())
        floor = (1e-9 * self.problem.span) ** 2 * float(np.mean(1.0 / self.problem.sigma**2))
        return _Statistic(
            best.cost, self.data.n_points, n_free, self.absolute, self.confidence, floor
        )

    def run(self, intervals: str, n_boot: int, seed: int) -> FitResult:
        pb = self.problem
        found = multistart(pb)
        best = found.solution
        if best.status == STATUS_FAILED or not math.isfinite(best.cost):
            return self._failed(best)
        profiles: dict[str, Profile] = {}
        boot_info: dict[str, int] | None = None
        for _ in range(4):  # a profile may uncover a better optimum: restart from it
            try:
                statistic = self.statistic(best)
                lin = linearise(pb, best, statistic)
                if intervals == "profile":
                    ends, profiles = self._profiles(best, statistic, lin.cov)
                elif intervals == "bootstrap":
                    ends, boot_info = self._bootstrap(best, n_boot, seed)
                else:  # best fit only: no interval, hence no claim about identifiability
                    ends = {}
                break
            except _BetterFitFound as better:
                best = pb.solve(better.solution.z, pb.free)
        else:  # pragma: no cover - pathological surfaces only
            ends = {}
        self._diagnose(best, statistic, lin, ends, found.others)
        return self._pack(best, statistic, lin.cov, ends, profiles, intervals, boot_info)

    # intervals -------------------------------------------------------------------------------
    def _profiles(
        self, best: _Solution, statistic: _Statistic, cov: FloatArray
    ) -> tuple[dict[int, tuple[float | None, float | None]], dict[str, Profile]]:
        pb = self.problem
        free_idx = np.flatnonzero(pb.free)
        ends: dict[int, tuple[float | None, float | None]] = {}
        profiles: dict[str, Profile] = {}
        for col, j in enumerate(free_idx.tolist()):
            se = math.sqrt(cov[col, col]) if cov[col, col] > 0 else math.nan
            width = pb.upper[j] - pb.lower[j]
            step0 = (
                se
                if math.isfinite(se) and 1e-9 * pb.x_scale[j] < se < 0.1 * width
                else (0.05 * pb.x_scale[j] if j >= pb.k else 0.05)
            )
            trace: list[tuple[float, float]] = [(float(best.z[j]), 0.0)]
            low = _profile_side(pb, j, best, statistic, -1, step0, trace)
            high = _profile_side(pb, j, best, statistic, +1, step0, trace)
            ends[j] = (low, high)
            trace.sort()
            values = np.array([t[0] for t in trace])
            if j < pb.k:
                values = np.exp(values)
            profiles[pb.names[j]] = Profile(
                values, np.array([t[1] for t in trace]), statistic.threshold
            )
        return ends, profiles

    def _bootstrap(
        self, best: _Solution, n_boot: int, seed: int
    ) -> tuple[dict[int, tuple[float | None, float | None]], dict[str, int]]:
        pb = self.problem
        rng = np.random.default_rng(seed)
        n = self.data.n_points
        n_free = int(pb.free.sum())
        fitted = pb.model.predict(pb.theta(best.z), pb.x)
        standardized = (pb.y - fitted) / pb.sigma * math.sqrt(n / (n - n_free))
        standardized -= standardized.mean()
        y_original = pb.y
        samples = []
        failed = 0
        try:
            for _ in range(n_boot):
                pb.y = fitted + rng.choice(standardized, size=n, replace=True) * pb.sigma
                sol = pb.solve(best.z, pb.free)
                if sol.status == STATUS_CONVERGED and math.isfinite(sol.cost):
                    samples.append(sol.z)
                else:
                    failed += 1
        finally:
            pb.y = y_original
        ends: dict[int, tuple[float | None, float | None]] = {}
        alpha = 1.0 - self.confidence
        z = np.array(samples) if samples else np.empty((0, pb.p))
        for j in np.flatnonzero(pb.free).tolist():
            if z.shape[0] < 20:
                ends[j] = (None, None)
                continue
            near_low = np.mean(z[:, j] <= pb.lower[j] + 1e-3 * pb.x_scale[j])
            near_high = np.mean(z[:, j] >= pb.upper[j] - 1e-3 * pb.x_scale[j])
            lo, hi = np.quantile(z[:, j], [alpha / 2, 1 - alpha / 2])
            ends[j] = (
                None if near_low >= alpha / 2 else float(lo),
                None if near_high >= alpha / 2 else float(hi),
            )
        if failed > 0.1 * n_boot:
            self.warnings.append(
                f"{failed} of {n_boot} bootstrap refits failed to converge; the bootstrap "
                "intervals rest on the rest and may be too narrow"
            )
        return ends, {"replicates": n_boot, "seed": int(seed), "failed": failed}

    # diagnostics -----------------------------------------------------------------------------
    def _diagnose(
        self,
        best: _Solution,
        statistic: _Statistic,
        lin: Linearisation,
        ends: Mapping[int, tuple[float | None, float | None]],
        others: list[_Solution],
    ) -> None:
        pb = self.problem
        pct = f"{100 * self.confidence:g} %"
        unidentified: list[str] = []
        for j, (low, high) in ends.items():
            name = pb.names[j]
            bound_lo, bound_hi = pb.theta(pb.lower)[j], pb.theta(pb.upper)[j]
            on_lo = best.z[j] <= pb.lower[j] + 1e-6 * pb.x_scale[j]
            on_hi = best.z[j] >= pb.upper[j] - 1e-6 * pb.x_scale[j]
            if on_lo or on_hi:
                self.warnings.append(
                    f"{name} sits at its search bound ({(bound_lo if on_lo else bound_hi):.3g}): "
                    f"the data push it {'down' if on_lo else 'up'} without limit; treat the "
                    "estimate as a bound, not a value"
                )
            if low is None and high is None:
                unidentified.append(name)
                self.warnings.append(
                    f"{name} is not identifiable from these data: the fit is equally good "
                    f"across its whole search range ({bound_lo:.3g} to {bound_hi:.3g}); its "
                    f"{pct} interval is open on both sides (low = high = null)"
                )
            elif low is None or high is None:
                unidentified.append(name)
                side, key, bound = (
                    ("below", "low", bound_lo) if low is None else ("above", "high", bound_hi)
                )
                self.warnings.append(
                    f"{name} is not identifiable from these data {side} its estimate: the fit "
                    f"stays within the {pct} threshold up to the search bound ({bound:.3g}), so "
                    f"its interval is open {side} ({key} = null)"
                )
        free_names = [pb.names[j] for j in np.flatnonzero(pb.free)]
        if lin.condition > CONDITION_WARNING:
            weak = ", ".join(free_names[c] for c in lin.weakest)
            self.warnings.append(
                f"the fit is nearly degenerate (scaled Jacobian condition number "
                f"{lin.condition:.2g}): the data constrain only a combination of {weak}, not "
                "each of them"
            )
        cov = lin.cov
        se = np.sqrt(np.clip(np.diag(cov), 0, None))
        # In a degenerate fit the pairwise correlations only echo the weak direction named above.
        pairs = [] if lin.condition > CONDITION_WARNING else range(len(free_names))
        for a in pairs:
            for b in range(a + 1, len(free_names)):
                if se[a] > 0 and se[b] > 0:
                    rho = float(np.clip(cov[a, b] / (se[a] * se[b]), -1.0, 1.0))
                    if abs(rho) > CORRELATION_WARNING:
                        self.warnings.append(
                            f"{free_names[a]} and {free_names[b]} are strongly correlated "
                            f"(correlation {rho:+.3f}): the data pin down a combination of them, "
                            "not each one"
                        )
        if self.model.name in ("quasi_steady", "mass_action"):
            pair = (
                ("K1", "K2")
                if self.model.name == "quasi_steady"
                else ("kinase_km", "phosphatase_km")
            )
            at_top = [
                p
                for p in pair
                if best.z[pb.names.index(p)] >= pb.upper[pb.names.index(p)] - 0.01
                or ends.get(pb.names.index(p), (0.0, 0.0))[1] is None
            ]
            if len(at_top) == 2:
                self.warnings.append(
                    f"{pair[0]} and {pair[1]} both run to large values: the data are consistent "
                    "with enzymes far from saturation, a Michaelian (not ultrasensitive) cycle"
                )
            if any(p in unidentified for p in pair):
                self.warnings.append(
                    f"{pair[0]} and {pair[1]} cannot be told apart from this one curve: its "
                    "steepness and midpoint depend on both; a titration at a second substrate or "
                    "enzyme level, or fixing one constant from an independent measurement, can "
                    "separate them"
                )
        for other in others:
            s = statistic(other.cost)
            if 1e-6 < s < statistic.threshold:
                far = [
                    pb.names[j]
                    for j in np.flatnonzero(pb.free).tolist()
                    if abs(other.z[j] - best.z[j]) > 0.1 * pb.x_scale[j]
                    and not _inside(other.z[j], ends.get(j, (None, None)))
                ]
                if far:
                    values = dict(zip(pb.names, pb.theta(other.z), strict=True))
                    listed = ", ".join(f"{name} = {values[name]:.3g}" for name in far)
                    self.warnings.append(
                        f"a separate parameter set also fits within the {pct} threshold "
                        f"({listed}); the intervals may be too narrow"
                    )
                    break
        if self.data.sd is not None:
            dof = self.data.n_points - int(pb.free.sum())
            chi2 = best.cost
            upper = stats.chi2.sf(chi2, dof)
            if upper < 1e-3:
                self.warnings.append(
                    f"the scatter about the fit is larger than the stated sd (reduced chi-square "
                    f"{chi2 / dof:.3g}, p = {upper:.1g}): the sd column understates the error or "
                    "the model misses a feature of the data"
                    + (" ; the absolute-sd intervals are too narrow" if self.absolute else "")
                )
            elif stats.chi2.cdf(chi2, dof) < 1e-3:
                self.warnings.append(
                    f"the scatter about the fit is much smaller than the stated sd (reduced "
                    f"chi-square {chi2 / dof:.3g}): the sd column may overstate the error"
                )
        if best.cost <= (1e-9 * pb.span) ** 2 * pb.x.size * float(np.mean(1.0 / pb.sigma**2)):
            self.warnings.append(
                "the model fits the data exactly (residuals at rounding level): intervals "
                "reflect rounding only"
            )

    # packing -----------------------------------------------------------------------------------
    def _pack(
        self,
        best: _Solution,
        statistic: _Statistic,
        cov: FloatArray,
        ends: Mapping[int, tuple[float | None, float | None]],
        profiles: dict[str, Profile],
        method: str,
        boot_info: dict[str, int] | None,
    ) -> FitResult:
        pb = self.problem
        theta = pb.theta(best.z)
        estimates = []
        for j, spec in enumerate(self.model.specs):
            value = float(theta[j])
            if not pb.free[j]:
                estimates.append(
                    ParameterEstimate(
                        spec.name, self._unit(spec.unit), value, value, value, fixed=True
                    )
                )
                continue
            low_z, high_z = ends.get(j, (None, None))

            def natural(zv: float | None, j: int = j) -> float | None:
                if zv is None:
                    return None
                return float(math.exp(zv)) if j < pb.k else float(zv)

            estimates.append(
                ParameterEstimate(
                    spec.name, self._unit(spec.unit), value, natural(low_z), natural(high_z)
                )
            )
        free_names = [pb.names[j] for j in np.flatnonzero(pb.free)]
        se = np.sqrt(np.clip(np.diag(cov), 0, None))
        correlations: dict[str, dict[str, float | None]] = {}
        for a, na in enumerate(free_names):
            correlations[na] = {}
            for b, nb in enumerate(free_names):
                ok = se[a] > 0 and se[b] > 0 and math.isfinite(cov[a, b])
                correlations[na][nb] = (
                    float(np.clip(cov[a, b] / (se[a] * se[b]), -1, 1)) if ok else None
                )
        n = self.data.n_points
        n_free = int(pb.free.sum())
        fitted = pb.model.predict(theta, pb.x)
        rss = float(np.sum((pb.y - fitted) ** 2))
        weighted = self.data.sd is not None
        loglik, aic, aicc, bic = likelihood(best.cost, pb.sigma, weighted, self.absolute, n, n_free)
        derived = self.model.derived(dict(zip(pb.names, map(float, theta), strict=True)))
        message = best.message if best.status != STATUS_CONVERGED else "fit converged"
        if best.status == STATUS_NOT_CONVERGED:
            self.warnings.insert(0, f"the optimiser did not converge: {best.message}")
        return FitResult(
            model=self.model.name,
            parameters=tuple(estimates),
            success=best.status == STATUS_CONVERGED,
            status=best.status,
            message=message,
            n_points=n,
            n_parameters=n_free,
            rss=rss,
            chi_square=best.cost if weighted else None,
            residual_sd=math.sqrt(rss / (n - n_free)),
            log_likelihood=loglik,
            aic=aic,
            aicc=aicc,
            bic=bic,
            correlations=correlations,
            warnings=tuple(dict.fromkeys(self.warnings)),
            interval_method=method,
            confidence=self.confidence,
            derived=derived,
            profiles=profiles,
            bootstrap=boot_info,
            input=self.data.input,
            readout=self.data.readout,
            sd=self.data.sd,
            fitted=fitted,
            absolute_sd=self.absolute,
            shape_model=self.model,
            theta=theta,
        )

    def _unit(self, unit: str) -> str:
        if unit == "input":
            return self.data.input_unit
        if unit == "readout":
            return self.data.readout_unit
        if unit == "1/input":
            return "1" if self.data.input_unit == "1" else f"1/{self.data.input_unit}"
        return unit

    def _failed(self, best: _Solution) -> FitResult:
        pb = self.problem
        nan = math.nan
        theta = pb.theta(best.z)
        estimates = tuple(
            ParameterEstimate(
                s.name, self._unit(s.unit), float(theta[j]), None, None, fixed=not pb.free[j]
            )
            for j, s in enumerate(self.model.specs)
        )
        n = self.data.n_points
        return FitResult(
            model=self.model.name,
            parameters=estimates,
            success=False,
            status=STATUS_FAILED,
            message=best.message,
            n_points=n,
            n_parameters=int(pb.free.sum()),
            rss=nan,
            chi_square=None,
            residual_sd=nan,
            log_likelihood=nan,
            aic=nan,
            aicc=None,
            bic=nan,
            correlations={},
            warnings=(f"the fit failed: {best.message}",),
            interval_method="profile",
            confidence=self.confidence,
            derived={},
            profiles={},
            bootstrap=None,
            input=self.data.input,
            readout=self.data.readout,
            sd=self.data.sd,
            fitted=np.full(n, nan),
            absolute_sd=self.absolute,
            shape_model=self.model,
            theta=theta,
        )


def _inside(z: float, interval: tuple[float | None, float | None]) -> bool:
    low, high = interval
    return (low is None or z >= low) and (high is None or z <= high)
