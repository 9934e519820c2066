"""Stochastic simulation: exactness against the stationary distributions, reproducibility,
progress, cancellation and refusal of bad requests."""

from __future__ import annotations

import math
import threading

import numpy as np
import pytest
import scipy.stats
from noise_reference import (
    expected_tv_bound_iid_pooled,
    expected_tv_bound_reversible,
    histogram,
    make_cycle,
    mcdiarmid_margin,
    network_generator,
    sparse_stationary,
    total_variation,
)

from hairtrigger.core import _ssa_kernels as kernels
from hairtrigger.core import ssa
from hairtrigger.core.copynumber import CopyNumbers
from hairtrigger.core.noise import (
    BirthDeathChain,
    occupancy_variance_rate,
    stationary_distribution,
)
from hairtrigger.core.ssa import (
    SPECIES,
    STOICHIOMETRY,
    MassActionNetwork,
    simulate_ensemble,
)
from hairtrigger.core.steady import mass_action_state

#: Probability that a correct simulation fails one of the distribution checks (per check).
DELTA = 1e-3


# --- Gillespie (1977) against exact stationary distributions --------------------------------


def test_reduced_chain_histogram_matches_exact_distribution() -> None:
    """Reduced chain from its exact stationary distribution, N = 30, K1 = K2 = 0.1 (broad,
    near-zero-order). Bound on the total variation of the pooled histogram:
    E[TV] ≤ ½Σ√((p(1−p)/P + σ²(k)/(PΔ))/M) for a reversible chain (σ²(k) the exact occupancy
    variance rates, checked against the Poisson equation in test_exact) plus the McDiarmid
    margin √(ln(1/δ)/2M), exceeded with probability ≤ δ = 1e-3 by a correct simulation."""
    n_total, trajectories, points = 30, 2000, 41
    cycle = make_cycle(km=0.1, enzyme=10 / n_total)  # V2 = 10 molecules/s
    chain = BirthDeathChain.from_cycle(cycle, molecules=n_total)
    exact = stationary_distribution(chain)
    t_end = 4.0 * 40  # 40 integrated autocorrelation times (τ ≈ 3.96 s)
    result = simulate_ensemble(
        cycle, t_end, trajectories, molecules=n_total, seed=11, points=points
    )
    assert result.success
    observed = total_variation(histogram(result.counts["modified"], n_total), exact.probabilities)
    spacing = t_end / (points - 1)
    bound = expected_tv_bound_reversible(
        exact.probabilities, occupancy_variance_rate(exact), trajectories, points, spacing
    ) + mcdiarmid_margin(trajectories, DELTA)
    assert observed < bound
    # The check has power: a 5 % error in the activity ratio would exceed the bound.
    shifted = stationary_distribution(chain.with_activity_ratio(1.05))
    assert total_variation(shifted.probabilities, exact.probabilities) > 1.3 * bound


def test_full_network_with_scarce_enzymes_matches_reduced_chain() -> None:
    """Six-reaction network with one kinase and one phosphatase molecule, N = 20, fast binding
    (koff = 115/s ≫ kcat = 10/s). Its exact stationary distribution (sparse solve of its own
    generator) and the reduced chain differ by < 0.01 in total variation: the quasi-steady
    reduction is accurate here. The simulated total modified count B + C2 is compared with
    both. Bound: pooled samples of one trajectory average to variance ≤ p(1−p) whatever their
    correlation, so E[TV] ≤ ½Σ√(p(1−p)/M), plus the McDiarmid margin (δ = 1e-3). The steady
    start is the rounded deterministic state plus a burn-in of 3 correlation times (τ ≈ 1.9 s):
    the left-over transient, an offset below one molecule damped by e^-3 and more at later
    samples, is far inside the bound."""
    n_total, trajectories = 20, 3000
    cycle = make_cycle(enzyme=1 / n_total, km=0.25, kcat=10.0, kon=500.0)
    copies = CopyNumbers.from_molecules(cycle, n_total)
    network = MassActionNetwork.from_cycle(cycle, copies)
    assert (network.kinase, network.phosphatase) == (1, 1)
    q, states = network_generator(n_total, network.kinase, network.phosphatase, *network.constants)
    pi = sparse_stationary(q)
    full = np.bincount(states[:, 1] + states[:, 3], weights=pi, minlength=n_total + 1)
    chain = stationary_distribution(BirthDeathChain.from_copies(cycle, copies))
    reduction_error = total_variation(full, chain.probabilities)
    assert reduction_error < 0.01

    result = simulate_ensemble(
        cycle, 20.0, trajectories, molecules=n_total, model="mass_action", seed=2, points=21
    )
    assert result.success
    sample = histogram(result.counts["modified"] + result.counts["phosphatase_complex"], n_total)
    bound = expected_tv_bound_iid_pooled(full, trajectories) + mcdiarmid_margin(trajectories, DELTA)
    assert total_variation(sample, full) < bound
    assert total_variation(sample, chain.probabilities) < bound + reduction_error
    shifted = stationary_distribution(
        BirthDeathChain.from_copies(cycle, copies).with_activity_ratio(1.2)
    )
    assert total_variation(shifted.probabilities, chain.probabilities) > 2.0 * bound


def test_full_network_conserves_substrate_and_enzymes() -> None:
    cycle = make_cycle(enzyme=0.3, km=0.2)
    result = simulate_ensemble(
        cycle,
        5.0,
        20,
        molecules=50,
        model="mass_action",
        seed=4,
        initial={"modified": 10, "kinase_complex": 3},
    )
    counts = result.counts
    total = sum(counts[name] for name in SPECIES)
    assert np.all(total == 50)
    assert all(np.all(counts[name] >= 0) for name in SPECIES)
    assert counts["kinase_complex"].max() <= 15 and counts["phosphatase_complex"].max() <= 15
    assert np.all(counts["modified"][:, 0] == 10) and np.all(counts["kinase_complex"][:, 0] == 3)
    assert np.all(STOICHIOMETRY.sum(axis=1) == 0)  # every reaction conserves substrate


def test_full_network_large_n_recovers_mass_action_steady_state() -> None:
    """With many molecules and abundant enzymes (complexes hold a third of the substrate) the
    network, started with all substrate unmodified and enzymes free, settles at the
    deterministic mass-action steady state (an independent closed-form solve, DESIGN.md §2).
    Relaxation takes ~10 s here; counts are averaged over t = 20…40 s (fluctuations ~1 %)."""
    n_total = 20000
    cycle = make_cycle(enzyme=0.2, km=0.1, kcat=1.0, kon=20.0, ratio=1.5)
    det = mass_action_state(cycle.arrays())
    result = simulate_ensemble(
        cycle,
        40.0,
        2,
        molecules=n_total,
        model="mass_action",
        seed=9,
        points=41,
        initial={"modified": 0},
    )
    assert result.success
    assert result.counts["unmodified"][0, 0] == n_total
    late = result.t >= 20.0
    for name in SPECIES:
        expected = float(getattr(det, name)) * n_total  # W = 1 µM is N molecules
        assert result.counts[name][:, late].mean() == pytest.approx(expected, rel=0.03), name


def test_step_in_kinase_relaxes_to_new_exact_distribution() -> None:
    """From the steady state at r = 0.5, a step to r = 2 ends in the exact distribution at
    r = 2: one sample per trajectory at t_end (independent), E[TV] ≤ ½Σ√(p(1−p)/M) +
    McDiarmid margin; t_end is 30 integrated autocorrelation times of the new chain."""
    n_total, trajectories = 40, 2000
    cycle = make_cycle(km=0.2, enzyme=20 / n_total, ratio=0.5)
    after = cycle.replace(kinase_total=2.0 * cycle.phosphatase_total)
    exact_after = stationary_distribution(BirthDeathChain.from_cycle(after, molecules=n_total))
    exact_before = stationary_distribution(BirthDeathChain.from_cycle(cycle, molecules=n_total))
    result = simulate_ensemble(
        cycle,
        30.0,
        trajectories,
        molecules=n_total,
        seed=21,
        points=31,
        steps={"kinase_total": after.kinase_total},
    )
    mean = result.mean()
    assert mean[0] == pytest.approx(exact_before.mean, abs=0.5)
    assert mean[-1] == pytest.approx(exact_after.mean, abs=0.5)
    final = histogram(result.counts["modified"][:, -1], n_total)
    bound = expected_tv_bound_iid_pooled(
        exact_after.probabilities, trajectories
    ) + mcdiarmid_margin(trajectories, DELTA)
    assert total_variation(final, exact_after.probabilities) < bound


def test_rounding_enzymes_to_whole_molecules_is_reported() -> None:
    cycle = make_cycle(enzyme=0.0114)  # 11.4 molecules per 1000 substrate molecules
    run = simulate_ensemble(
        cycle,
        1.0,
        2,
        molecules=1000,
        model="mass_action",
        seed=0,
        initial={"modified": 0},
        steps={"kinase_total": 0.02},
    )
    assert run.enzyme_molecules == ((11, 11), (20, 11))
    assert len(run.warnings) == 2  # both before the step; 20 kinase after it is exact
    assert "kinase before the step is 11.4 molecules, simulated as 11 (-3.5 %)" in run.warnings[0]
    assert run.summary()["enzyme_molecules"]["kinase"] == 20
    exact = simulate_ensemble(
        cycle.replace(kinase_total=0.011, phosphatase_total=0.011),
        1.0,
        2,
        molecules=1000,
        model="mass_action",
        initial={"modified": 0},
    )
    assert exact.warnings == ()
    chain = simulate_ensemble(cycle, 1.0, 2, molecules=1000)
    assert chain.warnings == () and chain.enzyme_molecules == (None, None)


def test_enzyme_step_down_releases_bound_substrate() -> None:
    """Removed enzyme is taken free first, then from complexes, whose substrate is released."""
    cycle = make_cycle(enzyme=0.1)
    copies = CopyNumbers.from_molecules(cycle, 100)
    before = MassActionNetwork.from_cycle(cycle, copies)  # 10 kinase, 10 phosphatase
    after = MassActionNetwork.from_cycle(
        cycle.replace(kinase_total=0.04, phosphatase_total=0.2), copies
    )
    state = np.array([[56, 30, 9, 5], [60, 30, 2, 8]], dtype=np.int64)
    moved = ssa._apply_enzyme_step(state, before, after)
    # Kinase 10 → 4: row 0 has 1 free, so 5 complexes dissociate; row 1 has 8 free.
    # Phosphatase 10 → 20: added enzyme arrives free, complexes unchanged.
    np.testing.assert_array_equal(moved, [[61, 30, 4, 5], [60, 30, 2, 8]])
    assert np.all(moved.sum(axis=1) == 100)


# --- reproducibility, chunking, the compiled loop ---------------------------------------------


@pytest.mark.parametrize("model", ["quasi_steady", "mass_action"])
def test_same_seed_same_result_whatever_the_chunking(model: str, monkeypatch) -> None:
    cycle = make_cycle(enzyme=0.05, km=0.1)
    kwargs = {"molecules": 60, "model": model, "seed": 1234, "points": 11}
    whole = simulate_ensemble(cycle, 10.0, 12, **kwargs)
    again = simulate_ensemble(cycle, 10.0, 12, **kwargs)
    monkeypatch.setattr(ssa, "_EVENTS_PER_CHUNK", 1.0)  # one trajectory per chunk
    chunked = simulate_ensemble(cycle, 10.0, 12, **kwargs)
    tail = simulate_ensemble(cycle, 10.0, 5, first_trajectory=7, **kwargs)
    for name in SPECIES:
        np.testing.assert_array_equal(whole.counts[name], again.counts[name])
        np.testing.assert_array_equal(whole.counts[name], chunked.counts[name])
        np.testing.assert_array_equal(whole.counts[name][7:], tail.counts[name])
    other = simulate_ensemble(cycle, 10.0, 12, **{**kwargs, "seed": 1235})
    assert not np.array_equal(whole.counts["modified"], other.counts["modified"])
    assert whole.seed == 1234


def test_slices_run_separately_join_into_the_whole_ensemble() -> None:
    """What a cluster would do: slices with their own first_trajectory, joined afterwards."""
    cycle = make_cycle(enzyme=0.05, km=0.1)
    kwargs = {"molecules": 40, "model": "mass_action", "seed": 99, "points": 5, "burn_in": 2.0}
    whole = simulate_ensemble(cycle, 3.0, 9, **kwargs)
    parts = [
        simulate_ensemble(cycle, 3.0, k, first_trajectory=i, **kwargs)
        for i, k in ((0, 4), (4, 2), (6, 3))
    ]
    joined = ssa.EnsembleResult.concatenate(parts)
    assert joined.trajectories == joined.requested == 9 and joined.success
    for name in SPECIES:
        np.testing.assert_array_equal(joined.counts[name], whole.counts[name])
    np.testing.assert_array_equal(joined.events, whole.events)
    other_seed = simulate_ensemble(cycle, 3.0, 2, **{**kwargs, "seed": 1})
    with pytest.raises(ValueError, match="share"):
        ssa.EnsembleResult.concatenate([parts[0], other_seed])


def test_unseeded_runs_report_their_seed() -> None:
    cycle = make_cycle()
    first = simulate_ensemble(cycle, 1.0, 3, molecules=30)
    repeat = simulate_ensemble(cycle, 1.0, 3, molecules=30, seed=first.seed)
    np.testing.assert_array_equal(first.counts["modified"], repeat.counts["modified"])


def test_compiled_loop_equals_interpreted_loop() -> None:
    """The numba-compiled direct method gives bit-identical trajectories to the same code run
    by the Python interpreter (`py_func`)."""
    times = np.linspace(0.0, 3.0, 7)
    key = np.uint64(77)
    initial = np.array([0, 5, 12], dtype=np.int64)
    outputs = []
    for run in (kernels.simulate_chain, kernels.simulate_chain.py_func):
        out = np.zeros((3, 7), dtype=np.int64)
        events = np.zeros(3, dtype=np.int64)
        status = np.zeros(3, dtype=np.int64)
        run(
            initial,
            kernels.seed_states(key, 0, 3),
            times,
            20,
            8.0,
            2.0,
            6.0,
            3.0,
            10**6,
            out,
            events,
            status,
        )
        outputs.append((out, events))
    np.testing.assert_array_equal(outputs[0][0], outputs[1][0])
    np.testing.assert_array_equal(outputs[0][1], outputs[1][1])

    initial4 = np.array([[20, 0, 0, 0], [5, 10, 2, 3]], dtype=np.int64)
    constants = np.array([2.0, 5.0, 1.0, 3.0, 4.0, 2.0])
    outputs = []
    for run in (kernels.simulate_network, kernels.simulate_network.py_func):
        out = np.zeros((2, 7, 4), dtype=np.int64)
        events = np.zeros(2, dtype=np.int64)
        status = np.zeros(2, dtype=np.int64)
        run(
            initial4,
            kernels.seed_states(key, 0, 2),
            times,
            3,
            4,
            constants,
            10**6,
            out,
            events,
            status,
        )
        outputs.append(out)
    np.testing.assert_array_equal(outputs[0], outputs[1])


def test_random_streams_are_uniform_and_distinct() -> None:
    """Kolmogorov–Smirnov against U(0, 1) (scipy.stats.kstest) for one stream and across
    streams; distinct trajectories get distinct generator states."""
    states = kernels.seed_states(np.uint64(5), 0, 20000)
    assert np.unique(states, axis=0).shape[0] == 20000
    across = kernels.uniforms(states)
    assert scipy.stats.kstest(across, "uniform").pvalue > 1e-3
    one = kernels.seed_states(np.uint64(5), 0, 1)
    draws = np.array([kernels.uniforms(one)[0] for _ in range(20000)])
    assert scipy.stats.kstest(draws, "uniform").pvalue > 1e-3
    assert draws.min() >= 0.0 and draws.max() < 1.0


# --- progress and cancellation ----------------------------------------------------------------


def test_progress_reports_every_chunk(monkeypatch) -> None:
    monkeypatch.setattr(ssa, "_EVENTS_PER_CHUNK", 1.0)
    calls: list[tuple[int, int]] = []
    simulate_ensemble(
        make_cycle(),
        1.0,
        4,
        molecules=20,
        seed=0,
        progress=lambda done, total: calls.append((done, total)),
    )
    assert calls == [(1, 4), (2, 4), (3, 4), (4, 4)]


@pytest.mark.parametrize("kind", ["event", "callable"])
def test_cancel_returns_finished_trajectories(kind: str, monkeypatch) -> None:
    monkeypatch.setattr(ssa, "_EVENTS_PER_CHUNK", 1.0)
    flag = threading.Event()

    def progress(done: int, total: int) -> None:
        if done == 3:
            flag.set()

    cancel = flag if kind == "event" else flag.is_set
    cycle = make_cycle()
    partial = simulate_ensemble(
        cycle, 2.0, 10, molecules=25, seed=8, progress=progress, cancel=cancel
    )
    assert partial.status == "cancelled" and not partial.success
    assert partial.trajectories == 3 and partial.requested == 10
    assert "3 of 10" in partial.message
    full = simulate_ensemble(cycle, 2.0, 10, molecules=25, seed=8)
    np.testing.assert_array_equal(partial.counts["modified"], full.counts["modified"][:3])


def test_cancel_before_start_gives_empty_result() -> None:
    flag = threading.Event()
    flag.set()
    result = simulate_ensemble(make_cycle(), 1.0, 5, molecules=10, cancel=flag)
    assert result.trajectories == 0 and result.status == "cancelled"
    assert np.isnan(result.mean()).all()


def test_event_cap_is_reported_as_status(monkeypatch) -> None:
    original = ssa._plan

    def tight(*args, **kwargs):
        plan = original(*args, **kwargs)
        return ssa._Plan(**{**plan.__dict__, "max_events": 5})

    monkeypatch.setattr(ssa, "_plan", tight)
    result = simulate_ensemble(make_cycle(), 100.0, 3, molecules=50, seed=1)
    assert result.status == "event_limit" and not result.success
    assert np.all(result.events == 5)


# --- bad requests -----------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"trajectories": 0}, "trajectories"),
        ({"trajectories": 2.5}, "trajectories"),
        ({"trajectories": 10**7}, "trajectories"),
        ({"t_end": 0.0}, "t_end"),
        ({"t_end": float("nan")}, "t_end"),
        ({"points": 1}, "points"),
        ({"seed": -1}, "seed"),
        ({"seed": 1.5}, "seed"),
        ({"model": "exact"}, "model"),
        ({"molecules": 0}, "at least 1"),
        ({"molecules": None, "volume": -2.0}, "volume"),
        ({"initial": "random"}, "initial"),
        ({"initial": {"modified": 200}}, "between 0 and 100"),
        ({"initial": {"modified": 60, "unmodified": 60}}, "add up"),
        ({"initial": {"kinase_complex": 1}}, "unknown initial species"),
        ({"initial": {"modified": -1}}, "between"),
        ({"steps": {"substrate_total": 2.0}}, "substrate_total"),
        ({"steps": {"kinase_speed": 2.0}}, "unknown step key"),
        ({"steps": {"kinase_total": 0.0}}, "kinase_total"),
        ({"burn_in": 5.0}, "burn_in"),
        ({"trajectories": 1000, "t_end": 1e9}, "reaction events"),
        ({"trajectories": 100000, "points": 1000}, "store"),
        ({"event_budget": 0}, "event_budget"),
        ({"cancel": 3}, "cancel"),
    ],
)
def test_bad_requests_are_refused_with_a_clear_error(kwargs: dict, match: str) -> None:
    base = {"t_end": 1.0, "trajectories": 2, "molecules": 100}
    base.update(kwargs)
    t_end = base.pop("t_end")
    trajectories = base.pop("trajectories")
    with pytest.raises(ValueError, match=match):
        simulate_ensemble(make_cycle(), t_end, trajectories, **base)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"initial": {"kinase_complex": 50}}, "exceeds"),
        ({"burn_in": -1.0}, "burn_in"),
        ({"molecules": 10}, "enzyme molecule"),
    ],
)
def test_bad_mass_action_requests(kwargs: dict, match: str) -> None:
    base = {"molecules": 100, "model": "mass_action", **kwargs}
    with pytest.raises(ValueError, match=match):
        simulate_ensemble(make_cycle(enzyme=0.05), 1.0, 2, **base)


def test_negative_koff_is_refused() -> None:
    cycle = make_cycle(kon=1.0, km=0.1, kcat=1.0)  # kon·Km = 0.1 < kcat
    with pytest.raises(ValueError, match="kinase_kon"):
        simulate_ensemble(cycle, 1.0, 1, molecules=100, model="mass_action")


def test_summary_is_json_ready() -> None:
    import json

    result = simulate_ensemble(make_cycle(), 2.0, 3, molecules=30, seed=3)
    text = json.dumps(result.summary(), allow_nan=False)
    assert '"status": "completed"' in text
    assert result.events_per_second > 0
    assert math.isclose(result.readout("free_modified")[0, 0] * 30, result.counts["modified"][0, 0])
