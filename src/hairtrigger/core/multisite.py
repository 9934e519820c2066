"""Multisite cycles: n sites of one substrate modified distributively and sequentially.

One kinase and one phosphatase act on every site (shared enzymes), with the same constants at
each site. Three models of the same scheme:

``mass_action``
    Every enzyme–substrate complex kept (the one-level case of `hairtrigger.core.cascade`).
``michaelis_menten``
    Complexes neglected in the substrate balance, but both enzymes saturable and shared: the
    rate of step j → j + 1 is ``kcat_K·E·(S_j/Km_K) / (1 + Σ_{m<n} S_m/Km_K)``, and likewise for
    the phosphatase over the forms it acts on.
``first_order``
    Both enzymes far from saturation: every step first order.

At steady state each link carries zero net flux, so the free forms are a geometric series
``S_j = S_0·u^j`` in the per-site ratio u. For every model the kinase amount that gives a
chosen u is a closed form (a quadratic for mass action), which makes u the natural coordinate:
EC values and steepness need one-dimensional monotone searches only, and forward steady states
bracket the first crossing in u (the branch reached by raising the kinase from zero; several
crossings mean bistability and are flagged).

With first-order enzymes the fully modified fraction is ``uⁿ(u − 1)/(u^(n+1) − 1)``
(Gunawardena 2005, PNAS 102:14617), evaluated here as ``1 / Σ_{m=0..n} u^(−m)``.
"""

from __future__ import annotations

import numbers
from dataclasses import dataclass
from typing import Final

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .cascade import (
    EC_FRACTIONS,
    LN81,
    OUTPUT_DEFINITIONS,
    Cascade,
    CascadeLevel,
    EnzymeConstants,
    OutputSteepness,
    _check_definition,
    _check_number,
)
from .network import FloatArray

#: The multisite models, most detailed first.
MULTISITE_MODELS: Final[tuple[str, ...]] = ("mass_action", "michaelis_menten", "first_order")

#: Grid in ln u on which first crossings are bracketed before refinement.
_LOG_U_GRID: Final[FloatArray] = np.linspace(-60.0, 60.0, 961)


def fully_modified_fraction_first_order(u: ArrayLike, sites: int) -> FloatArray:
    """Fully modified fraction of an n-site cycle with first-order enzymes.

    Parameters
    ----------
    u : array_like
        Per-site ratio (kcat/Km·E)_kinase / (kcat/Km·E)_phosphatase, > 0.
    sites : int
        Number of sites n ≥ 1.

    Returns
    -------
    ndarray
        ``uⁿ(u − 1)/(u^(n+1) − 1)`` (Gunawardena 2005), computed as ``1/Σ_{m=0..n} u^(−m)``,
        which has no 0/0 at u = 1.

    Examples
    --------
    >>> golden = (1 + 5 ** 0.5) / 2
    >>> float(fully_modified_fraction_first_order(golden, 2))
    0.5
    """
    n = _check_sites(sites)
    log_u = np.log(np.asarray(u, dtype=float))
    m = np.arange(n + 1)
    return np.asarray(1.0 / np.sum(np.exp(-log_u[..., None] * m), axis=-1), dtype=float)


def _check_sites(sites: int) -> int:
    if isinstance(sites, bool) or not isinstance(sites, numbers.Integral) or sites < 1:
        msg = f"`sites` must be a whole number ≥ 1; got {sites!r}"
        raise ValueError(msg)
    return int(sites)


def _check_model(model: str) -> str:
    if model not in MULTISITE_MODELS:
        msg = f"`model` must be one of {', '.join(map(repr, MULTISITE_MODELS))}; got {model!r}"
        raise ValueError(msg)
    return model


@dataclass(frozen=True)
class MultisiteCycle:
    """An n-site substrate with one shared kinase and one shared phosphatase.

    Parameters
    ----------
    sites : int
        Number of sites (≥ 1), modified distributively and sequentially.
    substrate_total, kinase_total, phosphatase_total : float
        Totals, µM (kinase ≥ 0, others > 0).
    kinase, phosphatase : EnzymeConstants
        Per-site constants (kon, koff, kcat), the same at every site.
    """

    sites: int
    substrate_total: float
    kinase_total: float
    phosphatase_total: float
    kinase: EnzymeConstants
    phosphatase: EnzymeConstants

    def __post_init__(self) -> None:
        object.__setattr__(self, "sites", _check_sites(self.sites))
        object.__setattr__(
            self, "substrate_total", _check_number("substrate_total", self.substrate_total)
        )
        object.__setattr__(
            self, "kinase_total", _check_number("kinase_total", self.kinase_total, allow_zero=True)
        )
        object.__setattr__(
            self, "phosphatase_total", _check_number("phosphatase_total", self.phosphatase_total)
        )
        for role in ("kinase", "phosphatase"):
            if not isinstance(getattr(self, role), EnzymeConstants):
                msg = f"`{role}` must be EnzymeConstants"
                raise ValueError(msg)

    def as_cascade(self, name: str = "substrate") -> Cascade:
        """The same cycle as a one-level cascade whose input enzyme is the kinase."""
        level = CascadeLevel(
            name,
            self.sites,
            self.substrate_total,
            self.phosphatase_total,
            self.kinase,
            self.phosphatase,
        )
        return Cascade(self.kinase_total, (level,))


@dataclass(frozen=True)
class MultisiteState:
    """Steady state(s) of a multisite cycle, arrays over the points asked for.

    Attributes
    ----------
    kinase_total : ndarray, shape (P,)
        Kinase totals, µM.
    log_ratio : ndarray, shape (P,)
        ln u, the per-site ratio of consecutive free forms.
    forms : ndarray, shape (P, n + 1)
        Free substrate with j sites modified, µM.
    kinase_complexes : ndarray, shape (P, n)
        Kinase bound to the form with j sites modified (zero unless mass action), µM.
    phosphatase_complexes : ndarray, shape (P, n)
        Phosphatase bound to the form with j + 1 sites modified, µM.
    free_kinase, free_phosphatase : ndarray, shape (P,)
        µM.
    free, total : ndarray, shape (P,)
        Fully modified fraction of substrate: free, and including its phosphatase complex.
    multiple : ndarray of bool, shape (P,)
        More than one steady state exists at that kinase amount (the lowest is reported).
    success : ndarray of bool, shape (P,)
    """

    kinase_total: FloatArray
    log_ratio: FloatArray
    forms: FloatArray
    kinase_complexes: FloatArray
    phosphatase_complexes: FloatArray
    free_kinase: FloatArray
    free_phosphatase: FloatArray
    free: FloatArray
    total: FloatArray
    multiple: NDArray[np.bool_]
    success: NDArray[np.bool_]


def _positive_quadratic_root(a: FloatArray, b: FloatArray, c: FloatArray) -> FloatArray:
    """Positive root of a·x² + b·x − c = 0 (a ≥ 0, c > 0) without cancellation."""
    root = np.sqrt(b * b + 4.0 * a * c)
    with np.errstate(divide="ignore", invalid="ignore"):
        small = 2.0 * c / (b + root)
        large = (root - b) / (2.0 * a)
    return np.asarray(np.where(b >= 0.0, small, large), dtype=float)


def _state_from_weights(
    cycle: MultisiteCycle, model: str, log_u: FloatArray, q: FloatArray
) -> dict[str, FloatArray]:
    """Species for weights ``q_j = u^j / max(1, uⁿ)``; finite for any u, including u → ∞."""
    n = cycle.sites
    w = cycle.substrate_total
    p_tot = cycle.phosphatase_total
    km_k, km_p = cycle.kinase.km, cycle.phosphatase.km
    g = cycle.phosphatase.specificity / cycle.kinase.specificity  # cP/cK
    s_all = np.sum(q, axis=-1)
    s_k = np.sum(q[..., :n], axis=-1)  # forms the kinase acts on
    s_p = np.sum(q[..., 1:], axis=-1)  # forms the phosphatase acts on (= u·s_k)
    if model == "mass_action":
        a = s_all * s_p / km_p
        b = s_all + p_tot * s_p * (g / km_k + 1.0 / km_p) - w * s_p / km_p
        x = _positive_quadratic_root(a, b, np.full_like(a, w))
        free_p = p_tot / (1.0 + x * s_p / km_p)
    else:
        x = w / s_all
        free_p = np.full_like(x, p_tot)
    forms = x[..., None] * q
    if model == "mass_action":
        # Kinase complexes: K·S_j/Km_K with K = u·g·P, i.e. g·P·S_(j+1)/Km_K (finite as u → ∞).
        kinase_cx = g * free_p[..., None] * forms[..., 1:] / km_k
        phosphatase_cx = free_p[..., None] * forms[..., 1:] / km_p
        with np.errstate(over="ignore"):
            free_k = np.exp(log_u) * g * free_p
        kinase_total = free_k + np.sum(kinase_cx, axis=-1)
    else:
        kinase_cx = np.zeros_like(forms[..., 1:])
        phosphatase_cx = np.zeros_like(forms[..., 1:])
        with np.errstate(over="ignore"):
            u = np.exp(log_u)
        if model == "michaelis_menten":
            d_k = 1.0 + x * s_k / km_k
            d_p = 1.0 + x * s_p / km_p
            with np.errstate(over="ignore", invalid="ignore"):
                kinase_total = u * g * p_tot * d_k / d_p
        else:
            kinase_total = u * g * p_tot
        free_k = kinase_total
    free = forms[..., -1] / w
    total = (forms[..., -1] + phosphatase_cx[..., -1]) / w
    return {
        "forms": forms,
        "kinase_complexes": kinase_cx,
        "phosphatase_complexes": phosphatase_cx,
        "free_kinase": np.asarray(free_k, dtype=float),
        "free_phosphatase": np.asarray(free_p, dtype=float),
        "kinase_total": np.asarray(kinase_total, dtype=float),
        "free": np.asarray(free, dtype=float),
        "total": np.asarray(total, dtype=float),
    }


def _weights(log_u: FloatArray, sites: int) -> FloatArray:
    j = np.arange(sites + 1)
    log_max = np.maximum(0.0, sites * log_u)
    return np.asarray(np.exp(log_u[..., None] * j - log_max[..., None]), dtype=float)


def multisite_state_at_ratio(
    cycle: MultisiteCycle, log_ratio: ArrayLike, model: str = "mass_action"
) -> dict[str, FloatArray]:
    """Steady state with per-site ratio u = exp(`log_ratio`), and the kinase total giving it.

    The inverse map (closed form for every model). Returns a dict with ``forms``,
    ``kinase_complexes``, ``phosphatase_complexes``, ``free_kinase``, ``free_phosphatase``,
    ``kinase_total``, ``free`` and ``total``.
    """
    _check_model(model)
    log_u = np.asarray(log_ratio, dtype=float)
    return _state_from_weights(cycle, model, log_u, _weights(log_u, cycle.sites))


def multisite_plateau(cycle: MultisiteCycle, model: str = "mass_action") -> dict[str, float]:
    """Fully modified fractions (``free``, ``total``) as the kinase grows without bound."""
    _check_model(model)
    q = np.zeros(cycle.sites + 1)
    q[-1] = 1.0
    state = _state_from_weights(cycle, model, np.asarray(np.inf), q)
    return {"free": float(state["free"]), "total": float(state["total"])}


def _first_crossing(
    values: FloatArray, targets: FloatArray
) -> tuple[NDArray[np.intp], NDArray[np.bool_], NDArray[np.bool_]]:
    """Index k of the first grid interval [k, k + 1] where values cross up through target.

    `values` (P, G) along the grid, `targets` (P,). Returns k, found, and whether the values
    cross the target more than once (non-monotone: several solutions).
    """
    above = values >= targets[:, None]
    up = ~above[:, :-1] & above[:, 1:]
    down = above[:, :-1] & ~above[:, 1:]
    found = np.any(up, axis=1) & ~above[:, 0]
    k = np.argmax(up, axis=1)
    several = found & np.any(down, axis=1)
    return k, found, several


def _refine(
    func, lo: FloatArray, hi: FloatArray, targets: FloatArray, iterations: int = 200
) -> FloatArray:  # noqa: ANN001
    """Bisection for func(x) = target with func increasing on each bracket [lo, hi]."""
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        higher = func(mid) >= targets
        hi = np.where(higher, mid, hi)
        lo = np.where(higher, lo, mid)
        if np.all(hi - lo <= 4e-16 * np.maximum(1.0, np.abs(mid))):
            break
    return np.asarray(0.5 * (lo + hi), dtype=float)


def multisite_steady_state(
    cycle: MultisiteCycle, kinase_total: ArrayLike | None = None, model: str = "mass_action"
) -> MultisiteState:
    """Steady state of a multisite cycle at one or many kinase totals.

    Parameters
    ----------
    cycle : MultisiteCycle
        The cycle; its ``kinase_total`` is used unless `kinase_total` is given.
    kinase_total : array_like, optional
        Kinase totals, µM (≥ 0).
    model : {"mass_action", "michaelis_menten", "first_order"}

    Returns
    -------
    MultisiteState
        Where several steady states exist the lowest (reached by raising the kinase from zero)
        is reported and ``multiple`` is True.
    """
    _check_model(model)
    totals = np.atleast_1d(
        np.asarray(cycle.kinase_total if kinase_total is None else kinase_total, dtype=float)
    )
    if totals.ndim != 1 or not np.all(np.isfinite(totals)) or np.any(totals < 0.0):
        msg = "`kinase_total` must be finite and ≥ 0 uM (a scalar or 1-D array)"
        raise ValueError(msg)
    n = cycle.sites
    positive = totals > 0.0
    log_u = np.full(totals.shape, -np.inf)
    multiple = np.zeros(totals.shape, dtype=bool)
    success = np.ones(totals.shape, dtype=bool)
    if np.any(positive):
        grid = _LOG_U_GRID
        log_e_grid = np.log(multisite_state_at_ratio(cycle, grid, model)["kinase_total"])
        targets = np.log(totals[positive])
        values = np.broadcast_to(log_e_grid, (targets.size, grid.size))
        k, found, several = _first_crossing(values, targets)

        def log_e(x: FloatArray) -> FloatArray:
            return np.asarray(np.log(multisite_state_at_ratio(cycle, x, model)["kinase_total"]))

        roots = _refine(log_e, grid[k], grid[k + 1], targets)
        log_u[positive] = np.where(found, roots, np.nan)
        success[positive] = found
        multiple[positive] = several
    weights = np.zeros((totals.size, n + 1))
    weights[~positive, 0] = 1.0
    ok = positive & np.isfinite(log_u)
    weights[ok] = _weights(log_u[ok], n)
    weights[positive & ~ok] = np.nan
    state = _state_from_weights(cycle, model, np.where(ok, log_u, -np.inf), weights)
    if np.any(~positive):
        state["free_kinase"][~positive] = 0.0
        state["kinase_total"][~positive] = 0.0
        state["free_phosphatase"][~positive] = cycle.phosphatase_total
    return MultisiteState(
        kinase_total=totals,
        log_ratio=log_u,
        forms=state["forms"],
        kinase_complexes=state["kinase_complexes"],
        phosphatase_complexes=state["phosphatase_complexes"],
        free_kinase=state["free_kinase"],
        free_phosphatase=state["free_phosphatase"],
        free=state["free"],
        total=state["total"],
        multiple=multiple,
        success=success,
    )


@dataclass(frozen=True)
class MultisiteResponse:
    """Steepness of the fully modified fraction against the kinase total.

    Attributes
    ----------
    free, total : OutputSteepness
        EC10/EC50/EC90 (kinase total, µM) at 10/50/90 % of the plateau (the computed limit of
        unbounded kinase), effective Hill coefficient ln 81 / ln(EC90/EC10) and plateau.
    monotone : bool
        The kinase total needed rises with the output everywhere (no bistability).
    warnings : tuple of str
    """

    free: OutputSteepness
    total: OutputSteepness
    monotone: bool
    warnings: tuple[str, ...]

    def output(self, definition: str) -> OutputSteepness:
        """The `OutputSteepness` of ``free`` or ``total``."""
        _check_definition(definition)
        return self.free if definition == "free" else self.total


def multisite_response(cycle: MultisiteCycle, model: str = "mass_action") -> MultisiteResponse:
    """EC values, Hill coefficient and plateau of the fully modified fraction.

    The kinase total at each target is found from the closed-form inverse map after locating
    the per-site ratio u at which the output equals the target.

    Examples
    --------
    >>> k = EnzymeConstants(kon=1.0, koff=1e4, kcat=1.0)     # Km ≈ 1e4 uM: first order
    >>> c = MultisiteCycle(2, 1.0, 0.0, 1.0, k, k)
    >>> r = multisite_response(c, "first_order")
    >>> round(r.free.ec50, 10) == round((1 + 5 ** 0.5) / 2, 10)
    True
    """
    _check_model(model)
    grid = _LOG_U_GRID
    on_grid = multisite_state_at_ratio(cycle, grid, model)
    log_e = np.log(on_grid["kinase_total"])
    warnings: list[str] = []
    monotone = bool(np.all(np.diff(log_e) > 0.0))
    if not monotone:
        warnings.append(
            "the kinase total needed does not rise monotonically with the output: the cycle is "
            "bistable over some range; EC values refer to the branch reached from zero kinase"
        )
    plateau = multisite_plateau(cycle, model)
    results: dict[str, OutputSteepness] = {}
    for definition in OUTPUT_DEFINITIONS:
        top = plateau[definition]
        targets = np.asarray(EC_FRACTIONS) * top
        curve = np.broadcast_to(on_grid[definition], (3, grid.size))
        k, found, _ = _first_crossing(curve, targets)

        def output(x: FloatArray, definition: str = definition) -> FloatArray:
            return np.asarray(multisite_state_at_ratio(cycle, x, model)[definition])

        log_u = _refine(output, grid[k], grid[k + 1], targets)
        ecs = np.where(found, multisite_state_at_ratio(cycle, log_u, model)["kinase_total"], np.nan)
        if not monotone:
            ecs = _along_rising_input(cycle, model, log_u, ecs)
        with np.errstate(divide="ignore", invalid="ignore"):
            hill = LN81 / np.log(ecs[2] / ecs[0])
        results[definition] = OutputSteepness(
            ec10=float(ecs[0]),
            ec50=float(ecs[1]),
            ec90=float(ecs[2]),
            hill_coefficient=float(hill),
            plateau=top,
        )
    return MultisiteResponse(results["free"], results["total"], monotone, tuple(warnings))


def _along_rising_input(
    cycle: MultisiteCycle, model: str, log_u: FloatArray, ecs: FloatArray
) -> FloatArray:
    """EC values on the branch followed as the kinase rises from zero (jumps at folds).

    That branch reaches ratio u only once the kinase exceeds every kinase total needed at
    smaller ratios, so the EC is the running maximum of the inverse map up to the target's u
    (found on a fine grid).
    """
    fine = np.linspace(_LOG_U_GRID[0], _LOG_U_GRID[-1], 96001)
    log_e = np.log(multisite_state_at_ratio(cycle, fine, model)["kinase_total"])
    running = np.maximum.accumulate(log_e)
    index = np.clip(np.searchsorted(fine, log_u), 0, fine.size - 1)
    with np.errstate(invalid="ignore"):
        return np.asarray(np.fmax(ecs, np.exp(running[index])) * (ecs == ecs), dtype=float)
