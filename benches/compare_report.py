"""Summary of benches/compare.sh: reads lines `NAME RATE RATE ...` (calls/s of
each round) on stdin, prints the best and median rate of each measurement and
the ratios against the engine's speed targets."""

import statistics
import sys

rates = {}
for line in sys.stdin:
    name, *values = line.split()
    rates[name] = [float(v) for v in values]
best = {k: max(v) for k, v in rates.items()}
median = {k: statistics.median(v) for k, v in rates.items()}
rounds = len(next(iter(rates.values())))

print(f"{'measurement':<16} {'best calls/s':>14} {'median calls/s':>15}   ({rounds} rounds)")
for k in rates:
    if not k.startswith("cpu-"):
        print(f"{k:<16} {best[k]:>14,.0f} {median[k]:>15,.0f}")
print()
print(f"{'ratio':<44} {'best':>8} {'median':>8}   target")


def row(what, num, den, target=None, ok=None):
    b = best[num] / best[den]
    m = median[num] / median[den]
    verdict = "" if ok is None else ("met" if ok(b) else "MISSED")
    print(f"{what:<44} {b:>8.3f} {m:>8.3f}   {target or '-':<8} {verdict}")


row("case 1 / minimal loop (speed)", "case1", "minimal-loop", ">= 0.5", lambda x: x >= 0.5)
row("case 1 / SimPy (speed)", "case1", "simpy", ">= 100", lambda x: x >= 100)
row("case 2 / case 1 (lognormal holding)", "case2", "case1")
for n in ("100", "1000"):
    row(f"case 3: cost per call, {n} / 10 servers", "case3-10", f"case3-{n}")
row("case 3: cost per call, 10000 / 10 servers", "case3-10", "case3-10000", "<= 1.5", lambda x: x <= 1.5)
row("case 4 / case 1 (overflow network)", "case4", "case1", ">= 0.333", lambda x: x >= 1 / 3)
row("case 5 / case 1 (queue, patience, redials)", "case5", "case1")
row("case 6: 2 threads / 1 thread (speed-up)", "case6-2threads", "case6-1thread", ">= 1.85", lambda x: x >= 1.85)
row("case 6: CPU time per call, 1 thread / 2 threads", "cpu-case6-2threads", "cpu-case6-1thread")
