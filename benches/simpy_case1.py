"""Benchmark case 1 written with SimPy, for benches/compare.sh.

One loss group of SERVERS circuits offered TRAFFIC erlangs: Poisson arrivals,
exponential holding (mean 180 s), blocked calls cleared (a call that finds
every circuit busy is counted and dropped, it does not queue). The group is a
simpy.Resource; each carried call is a process that holds one unit for its
holding time. Usage:

    python3 benches/simpy_case1.py CALLS [SERVERS TRAFFIC]

Prints `calls seconds blocked_share` on one line, like the minimal loop.
"""

import random
import sys
import time

import simpy

HOLDING_MEAN_S = 180.0


def main():
    calls = int(sys.argv[1]) if len(sys.argv) > 1 else 200_000
    servers = int(sys.argv[2]) if len(sys.argv) > 2 else 107
    traffic = float(sys.argv[3]) if len(sys.argv) > 3 else 90.0
    rate = traffic / HOLDING_MEAN_S

    arrivals_rng = random.Random(1)
    holding_rng = random.Random(2)
    env = simpy.Environment()
    group = simpy.Resource(env, capacity=servers)
    blocked = [0]

    def call(holding):
        with group.request() as req:
            yield req
            yield env.timeout(holding)

    def source():
        for _ in range(calls):
            yield env.timeout(arrivals_rng.expovariate(rate))
            holding = holding_rng.expovariate(1.0 / HOLDING_MEAN_S)
            if group.count < servers:
                env.process(call(holding))
            else:
                blocked[0] += 1

    started = time.perf_counter()
    env.process(source())
    env.run()
    seconds = time.perf_counter() - started
    print(f"{calls} {seconds:.6f} {blocked[0] / calls:.6f}")


if __name__ == "__main__":
    main()
