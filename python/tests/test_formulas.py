"""The formulas against outside references: the Poisson identity of
Erlang B (the Rust tests take it from statrs; here from math.lgamma, an
independent computation), the M/M/N, M/M/N+M and Engset balance equations
and the two-class product form solved here, Riordan's formula as
published, and handbook values (marked as recalled from memory)."""

import math

import numpy as np
import pytest

import busyhour as bh


def poisson_erlang_b(n, a):
    """B(N, A) = P(X = N) / P(X <= N) for X ~ Poisson(A) (Erlang's loss
    formula written with the Poisson law), terms in logarithms."""
    logs = [k * math.log(a) - math.lgamma(k + 1) for k in range(n + 1)]
    top = max(logs)
    total = math.fsum(math.exp(x - top) for x in logs)
    return math.exp(logs[n] - top) / total


def mmn_chain(n, a):
    """M/M/N by its balance equations, truncated far in the tail: the
    probability of waiting and the mean number waiting."""
    p = [1.0]
    for k in range(1, n + 2000):
        p.append(p[-1] * a / min(k, n))
    total = math.fsum(p)
    wait = math.fsum(p[n:]) / total
    queue = math.fsum((k - n) * p[k] for k in range(n, len(p))) / total
    return wait, queue


def close(actual, expected, rel):
    assert actual == pytest.approx(expected, rel=rel), f"{actual} vs {expected}"


GRID = [(1, 0.25), (3, 2.0), (5, 1.36), (10, 6.0), (18, 10.0), (30, 25.0), (60, 70.0), (120, 100.0)]


@pytest.mark.parametrize("n,a", GRID)
def test_erlang_b_matches_the_poisson_identity(n, a):
    close(bh.erlang_b(servers=n, traffic=a), poisson_erlang_b(n, a), 1e-11)


def test_erlang_b_small_cases_by_hand():
    # B(1, A) = A / (1 + A); B(3, 2) = (8/6) / (1 + 2 + 2 + 8/6) = 4/19.
    close(bh.erlang_b(servers=1, traffic=0.25), 0.2, 1e-15)
    close(bh.erlang_b(servers=3, traffic=2.0), 4.0 / 19.0, 1e-15)


def test_erlang_b_over_arrays_broadcasts_and_matches_one_by_one():
    servers = np.arange(1, 41)
    traffic = np.array([[5.0], [12.5], [30.0]])
    grid = bh.erlang_b(servers=servers, traffic=traffic)
    assert grid.shape == (3, 40)
    for i, a in enumerate(traffic[:, 0]):
        for j, n in enumerate(servers):
            close(grid[i, j], poisson_erlang_b(int(n), float(a)), 1e-11)


def test_lists_work_as_arrays():
    out = bh.erlang_b(servers=[1, 3], traffic=[0.25, 2.0])
    close(out[0], 0.2, 1e-15)
    close(out[1], 4.0 / 19.0, 1e-15)


def test_handbook_table_entries():
    # Recalled from memory of handbook tables (Erlang B, traffic at a grade
    # of service, to the two decimals the tables print), as in
    # tests/formulas_erlang_b.rs: 1% loss: 5 servers 1.36 E, 10 servers
    # 4.46 E, 20 servers 12.03 E, 30 servers 20.34 E, 100 servers 84.06 E;
    # 0.1% loss: 10 servers 3.09 E, 20 servers 9.41 E.
    table = [(5, 0.01, 1.36), (10, 0.01, 4.46), (20, 0.01, 12.03), (30, 0.01, 20.34),
             (100, 0.01, 84.06), (10, 0.001, 3.09), (20, 0.001, 9.41)]
    servers = np.array([t[0] for t in table])
    grades = np.array([t[1] for t in table])
    computed = bh.erlang_b_traffic(servers=servers, grade=grades)
    for (n, g, a), c in zip(table, computed):
        assert abs(c - a) <= 0.005, f"{n} servers at {g}: table {a}, computed {c}"
    # Recalled from handbook tables: 10 E at 1% loss need 18 circuits.
    assert bh.erlang_b_servers(traffic=10.0, grade=0.01) == 18


@pytest.mark.parametrize("a,grade", [(0.5, 0.01), (10.0, 0.01), (10.0, 0.001), (42.0, 0.02), (250.0, 0.005)])
def test_erlang_b_servers_is_the_fewest_by_the_poisson_identity(a, grade):
    n = bh.erlang_b_servers(traffic=a, grade=grade)
    assert isinstance(n, int)
    assert poisson_erlang_b(n, a) <= grade
    assert n == 0 or poisson_erlang_b(n - 1, a) > grade


def test_erlang_b_traffic_inverts_blocking():
    a = bh.erlang_b_traffic(servers=24, grade=0.02)
    close(poisson_erlang_b(24, a), 0.02, 1e-9)


def test_erlang_b_continuous_agrees_at_whole_numbers_and_falls_between():
    close(bh.erlang_b_continuous(servers=7.0, traffic=5.0), poisson_erlang_b(7, 5.0), 1e-11)
    mid = bh.erlang_b_continuous(servers=7.5, traffic=5.0)
    assert poisson_erlang_b(8, 5.0) < mid < poisson_erlang_b(7, 5.0)


@pytest.mark.parametrize("n,a", [(1, 0.5), (2, 1.0), (5, 3.5), (12, 10.0), (40, 35.0)])
def test_erlang_c_matches_the_mmn_chain(n, a):
    wait, queue = mmn_chain(n, a)
    close(bh.erlang_c(agents=n, traffic=a), wait, 1e-9)
    holding = 180.0
    # Little's law: mean wait = mean queue / arrival rate, rate = A / h.
    close(bh.erlang_c_mean_wait(agents=n, traffic=a, holding_s=holding), queue * holding / a, 1e-9)
    close(bh.occupancy(agents=n, traffic=a), a / n, 1e-15)


def test_erlang_c_two_agents_by_hand():
    # C(2, 1) = 1/3 (M/M/2 at half load, by hand from the balance equations).
    close(bh.erlang_c(agents=2, traffic=1.0), 1.0 / 3.0, 1e-15)


def test_service_level_is_the_waiting_time_law():
    # P(W <= t) = 1 - C e^{-(N - A) t / h} (M/M/N, first come first served).
    n, a, h, t = 12, 10.0, 180.0, 20.0
    wait, _ = mmn_chain(n, a)
    close(bh.service_level(agents=n, traffic=a, holding_s=h, within_s=t), 1 - wait * math.exp(-(n - a) * t / h), 1e-9)
    sl = bh.service_level(agents=np.array([11, 12, 13]), traffic=a, holding_s=h, within_s=t)
    assert sl[0] < sl[1] < sl[2]


def test_agents_for_service_level_is_the_fewest():
    n = bh.agents_for_service_level(traffic=10.0, holding_s=180.0, within_s=20.0, target=0.8)

    def sl(k):
        wait, _ = mmn_chain(k, 10.0)
        return 1 - wait * math.exp(-(k - 10.0) * 20.0 / 180.0)

    assert sl(n) >= 0.8 and sl(n - 1) < 0.8
    m = bh.agents_for_mean_wait(traffic=10.0, holding_s=180.0, mean_wait_s=15.0)
    assert mmn_chain(m, 10.0)[1] * 18.0 <= 15.0 < mmn_chain(m - 1, 10.0)[1] * 18.0


def test_unstable_queue_raises_or_gives_nan():
    with pytest.raises(ValueError, match="unstable queue"):
        bh.erlang_c(agents=5, traffic=5.0)
    out = bh.erlang_c(agents=np.array([4, 6]), traffic=5.0, errors="nan")
    assert math.isnan(out[0]) and out[1] == pytest.approx(mmn_chain(6, 5.0)[0], rel=1e-9)
    with pytest.raises(ValueError, match="element 0"):
        bh.erlang_c(agents=np.array([4, 6]), traffic=5.0)


def test_bad_arguments_name_the_argument():
    with pytest.raises(ValueError, match="offered traffic"):
        bh.erlang_b(servers=3, traffic=-1.0)
    with pytest.raises(ValueError, match="whole number"):
        bh.erlang_b(servers=2.5, traffic=1.0)
    with pytest.raises(ValueError, match="offered traffic"):
        bh.erlang_b(servers=3, traffic=float("nan"))
    with pytest.raises(TypeError):
        bh.erlang_b(3, 1.0)  # keyword arguments only


def erlang_a_chain(n, a, h, patience):
    """M/M/N+M by its balance equations: death rate min(k, N)/h + max(k - N, 0)/patience."""
    lam = a / h
    p = [1.0]
    k = 0
    while True:
        k += 1
        death = min(k, n) / h + max(k - n, 0) / patience
        p.append(p[-1] * lam / death)
        if p[-1] < 1e-30 * max(p):
            break
    total = math.fsum(p)
    p = [x / total for x in p]
    wait = math.fsum(p[n:])
    queue = math.fsum((j - n) * p[j] for j in range(n, len(p)))
    abandon_rate = queue / patience
    return wait, abandon_rate / lam, queue


@pytest.mark.parametrize("n,a,h,patience", [(10, 8.0, 180.0, 60.0), (5, 6.0, 120.0, 300.0), (30, 28.0, 200.0, 90.0)])
def test_erlang_a_matches_its_chain(n, a, h, patience):
    wait, abandonment, queue = erlang_a_chain(n, a, h, patience)
    s = bh.erlang_a(agents=n, traffic=a, holding_s=h, patience_s=patience, within_s=20.0)
    close(s.wait_probability, wait, 1e-9)
    close(s.abandonment, abandonment, 1e-9)
    close(s.mean_queue, queue, 1e-9)
    assert 0.0 < s.service_level < 1.0


def test_engset_matches_its_chain():
    # Engset by the birth-death chain of busy servers: birth rate
    # (S - k) beta, death rate k; time congestion p_N, call congestion the
    # same with S - 1 sources (arrival theorem for finite sources).
    def time_congestion(sources, servers, beta):
        p = [1.0]
        for k in range(1, servers + 1):
            p.append(p[-1] * (sources - k + 1) * beta / k)
        return p[-1] / math.fsum(p)

    s = bh.engset(sources=20, servers=6, idle_traffic=0.2)
    close(s.time_congestion, time_congestion(20, 6, 0.2), 1e-12)
    close(s.call_congestion, time_congestion(19, 6, 0.2), 1e-12)


def test_overflow_moments_are_riordans():
    # Riordan: M = A B(N, A), V = M (1 - M + A / (N + 1 + M - A)).
    n, a = 10, 8.0
    m = a * poisson_erlang_b(n, a)
    v = m * (1 - m + a / (n + 1 + m - a))
    o = bh.overflow_moments(servers=n, traffic=a)
    close(o.mean, m, 1e-11)
    close(o.variance, v, 1e-11)
    close(o.peakedness, v / m, 1e-11)


def test_equivalent_random_reproduces_the_moments():
    o = bh.overflow_moments(servers=12, traffic=10.0)
    exact = bh.equivalent_random(mean=o.mean, variance=o.variance, exact=True)
    # The exact equivalent group of a single overflow is the group itself
    # (Wilkinson's method is exact for one Poisson parcel).
    close(exact.traffic, 10.0, 1e-6)
    close(exact.servers, 12.0, 1e-6)
    rapp = bh.equivalent_random(mean=o.mean, variance=o.variance)
    assert abs(rapp.traffic - 10.0) < 0.5 and abs(rapp.servers - 12.0) < 0.6


def test_final_group_of_direct_traffic_is_erlang_b():
    f = bh.final_group(primaries=[], direct=5.0, servers=8)
    close(f.final_blocking, poisson_erlang_b(8, 5.0), 1e-11)
    g = bh.final_group(primaries=[(10.0, 12)], servers=5)
    # One primary: its overflow is exactly 10 E on 12 + 5 servers lost.
    close(g.lost_traffic, 10.0 * poisson_erlang_b(17, 10.0), 1e-6)


def test_kaufman_roberts_matches_the_product_form():
    # Two classes on C channels: the product form over (n1, n2) with
    # n1 b1 + n2 b2 <= C, solved here; class k is blocked in states with
    # fewer than b_k free channels.
    capacity, classes = 12, [(4.0, 1), (1.5, 3)]
    weights = {}
    for n1 in range(capacity + 1):
        for n2 in range(capacity // 3 + 1):
            if n1 + 3 * n2 <= capacity:
                weights[(n1, n2)] = 4.0**n1 / math.factorial(n1) * 1.5**n2 / math.factorial(n2)
    total = math.fsum(weights.values())
    expected = [
        math.fsum(w for (n1, n2), w in weights.items() if n1 + 3 * n2 + b > capacity) / total
        for _, b in classes
    ]
    got = bh.kaufman_roberts(capacity=capacity, classes=classes)
    for g, e in zip(got, expected):
        close(g, e, 1e-12)
    # One class of one channel is Erlang B.
    close(bh.kaufman_roberts(capacity=10, classes=[(5.0, 1)])[0], poisson_erlang_b(10, 5.0), 1e-12)
