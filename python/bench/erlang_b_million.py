"""Benchmark (not a test): a million Erlang B evaluations over a numpy
array, through busyhour.erlang_b. Target: under a second.

    python python/bench/erlang_b_million.py

Servers 1 to 100 and traffic 0.5 to 100 erlangs, drawn with a fixed seed;
the best of three timings is printed (the first includes warming caches).
"""

import time

import numpy as np

import busyhour as bh

N = 1_000_000


def main() -> None:
    rng = np.random.default_rng(20)
    servers = rng.integers(1, 101, size=N)
    traffic = rng.uniform(0.5, 100.0, size=N)
    timings = []
    for _ in range(3):
        started = time.perf_counter()
        blocking = bh.erlang_b(servers=servers, traffic=traffic)
        timings.append(time.perf_counter() - started)
    assert blocking.shape == (N,)
    best = min(timings)
    print(f"{N:,} Erlang B evaluations (servers 1-100): best of 3 {best:.3f} s "
          f"({best / N * 1e9:.0f} ns each); target under 1 s")


if __name__ == "__main__":
    main()
