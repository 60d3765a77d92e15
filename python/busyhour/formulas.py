"""Closed-form teletraffic formulas, computed by the busyhour library.

Every function takes keyword arguments in the trade's units: traffic in
erlangs, times in seconds, shares between 0 and 1, servers (circuits,
agents) as whole numbers. The one-value formulas (Erlang B and C and
their inverses) also take numpy arrays, broadcast against each other, and
return an array of the broadcast shape; plain lists work without numpy.

A value outside a formula's domain raises ``ValueError`` with the
library's message (``errors="raise"``, the default), or gives NaN for that
element (``errors="nan"``), handy over a grid that reaches an unstable
queue.
"""

from __future__ import annotations

from typing import Any, List, NamedTuple, Optional, Sequence, Tuple

from . import _busyhour

__all__ = [
    "erlang_b",
    "erlang_b_continuous",
    "erlang_b_servers",
    "erlang_b_traffic",
    "erlang_c",
    "erlang_c_mean_wait",
    "service_level",
    "occupancy",
    "agents_for_service_level",
    "agents_for_mean_wait",
    "erlang_a",
    "ErlangA",
    "engset",
    "Engset",
    "overflow_moments",
    "OverflowMoments",
    "equivalent_random",
    "EquivalentRandom",
    "final_group",
    "FinalGroup",
    "kaufman_roberts",
]


def _is_scalar(x: Any) -> bool:
    if isinstance(x, (int, float)):
        return True
    shape = getattr(x, "shape", None)
    if shape is not None:
        return shape == ()
    return not hasattr(x, "__len__")


def _numpy():
    try:
        import numpy
    except ImportError:
        return None
    return numpy


def _apply(name: str, args: Sequence[Any], errors: str, whole: bool = False) -> Any:
    """One library formula over scalars, lists or numpy arrays."""
    if errors not in ("raise", "nan"):
        raise ValueError(f"errors = {errors!r}: expected 'raise' or 'nan'")
    nan = errors == "nan"
    if all(_is_scalar(a) for a in args):
        try:
            value = _busyhour.evaluate(name, [float(a) for a in args])
        except ValueError:
            if nan:
                return float("nan")
            raise
        return int(value) if whole else value
    np = _numpy()
    if np is None:
        return _apply_lists(name, args, nan, whole)
    arrays = np.broadcast_arrays(*[np.asarray(a, dtype=np.float64) for a in args])
    shape = arrays[0].shape
    columns = [np.ascontiguousarray(a).tobytes() for a in arrays]
    out = _busyhour.evaluate_many(name, columns, int(arrays[0].size), nan)
    result = np.frombuffer(out, dtype=np.float64).reshape(shape).copy()
    if whole and not np.isnan(result).any():
        return result.astype(np.int64)
    return result


def _apply_lists(name: str, args: Sequence[Any], nan: bool, whole: bool) -> List[Any]:
    """Without numpy: lists of one length, scalars repeated."""
    lengths = {len(a) for a in args if not _is_scalar(a)}
    if len(lengths) != 1:
        raise ValueError(
            f"{name}: lists of different lengths {sorted(lengths)} (install numpy to broadcast arrays)"
        )
    (n,) = lengths
    rows = zip(*[a if not _is_scalar(a) else [a] * n for a in args])
    out: List[Any] = []
    for i, row in enumerate(rows):
        try:
            v = _busyhour.evaluate(name, [float(x) for x in row])
            out.append(int(v) if whole else v)
        except ValueError as e:
            if not nan:
                raise ValueError(f"element {i}: {e}") from None
            out.append(float("nan"))
    return out


def erlang_b(*, servers: Any, traffic: Any, errors: str = "raise") -> Any:
    """Erlang B blocking B(N, A): the share of calls lost when ``traffic``
    erlangs of Poisson traffic are offered to ``servers`` servers and
    blocked calls are cleared (any holding-time law: insensitivity).

    >>> round(erlang_b(servers=10, traffic=6.0), 6)
    0.043142
    """
    return _apply("erlang_b", (servers, traffic), errors)


def erlang_b_continuous(*, servers: Any, traffic: Any, errors: str = "raise") -> Any:
    """Erlang B for a fractional number of servers (the incomplete gamma
    continuation; equals Erlang B at whole numbers), as the equivalent
    random method needs."""
    return _apply("erlang_b_continuous", (servers, traffic), errors)


def erlang_b_servers(*, traffic: Any, grade: Any, errors: str = "raise") -> Any:
    """The fewest servers whose Erlang B blocking is at most ``grade`` (the
    grade of service, a share such as 0.01).

    >>> erlang_b_servers(traffic=10.0, grade=0.01)
    18
    """
    return _apply("erlang_b_servers", (traffic, grade), errors, whole=True)


def erlang_b_traffic(*, servers: Any, grade: Any, errors: str = "raise") -> Any:
    """The most traffic (erlangs) ``servers`` servers carry with Erlang B
    blocking at most ``grade``."""
    return _apply("erlang_b_traffic", (servers, grade), errors)


def erlang_c(*, agents: Any, traffic: Any, errors: str = "raise") -> Any:
    """Erlang C: the probability that a call waits (M/M/N, callers never
    give up); needs more agents than erlangs."""
    return _apply("erlang_c", (agents, traffic), errors)


def erlang_c_mean_wait(*, agents: Any, traffic: Any, holding_s: Any, errors: str = "raise") -> Any:
    """Erlang C mean waiting time of all calls (s), answered at once
    counting as 0 s; ``holding_s`` is the mean holding time."""
    return _apply("erlang_c_mean_wait", (agents, traffic, holding_s), errors)


def service_level(
    *, agents: Any, traffic: Any, holding_s: Any, within_s: Any, errors: str = "raise"
) -> Any:
    """Erlang C service level: the share of calls answered within
    ``within_s`` seconds, 1 - C(N, A) exp(-(N - A) t / h)."""
    return _apply("erlang_c_service_level", (agents, traffic, holding_s, within_s), errors)


def occupancy(*, agents: Any, traffic: Any, errors: str = "raise") -> Any:
    """Agent occupancy A / N of a stable delay system."""
    return _apply("erlang_c_occupancy", (agents, traffic), errors)


def agents_for_service_level(
    *, traffic: Any, holding_s: Any, within_s: Any, target: Any, errors: str = "raise"
) -> Any:
    """The fewest agents whose Erlang C service level reaches ``target``
    (a share answered within ``within_s`` seconds).

    >>> agents_for_service_level(traffic=10.0, holding_s=180.0, within_s=20.0, target=0.8)
    14
    """
    return _apply(
        "erlang_c_agents_for_service_level", (traffic, holding_s, within_s, target), errors, whole=True
    )


def agents_for_mean_wait(*, traffic: Any, holding_s: Any, mean_wait_s: Any, errors: str = "raise") -> Any:
    """The fewest agents whose Erlang C mean wait (all calls) is at most
    ``mean_wait_s`` seconds."""
    return _apply("erlang_c_agents_for_mean_wait", (traffic, holding_s, mean_wait_s), errors, whole=True)


class ErlangA(NamedTuple):
    """The figures of the Erlang A model (M/M/N+M: exponential patience)."""

    wait_probability: float
    abandonment: float
    answered: float
    mean_queue: float
    mean_wait_s: float
    mean_wait_answered_s: float
    carried_traffic: float
    occupancy: float
    service_level: Optional[float]
    service_level_of_answered: Optional[float]


def erlang_a(
    *, agents: int, traffic: float, holding_s: float, patience_s: float, within_s: Optional[float] = None
) -> ErlangA:
    """Erlang A: ``agents`` agents, ``traffic`` erlangs offered, mean holding
    time ``holding_s`` and mean (exponential) patience ``patience_s``; with
    ``within_s`` also the service level (all offered calls, and answered
    calls only)."""
    return ErlangA(**_busyhour.erlang_a(int(agents), float(traffic), float(holding_s), float(patience_s), within_s))


class Engset(NamedTuple):
    """Engset's loss system with finitely many sources."""

    time_congestion: float
    call_congestion: float
    carried_traffic: float
    offered_traffic: float


def engset(*, sources: int, servers: int, idle_traffic: float) -> Engset:
    """Engset: ``sources`` sources, each offering ``idle_traffic`` erlangs
    while idle, on ``servers`` servers."""
    return Engset(**_busyhour.engset(int(sources), int(servers), float(idle_traffic)))


class OverflowMoments(NamedTuple):
    """Mean and variance of an overflow stream (Riordan), and its
    peakedness variance / mean."""

    mean: float
    variance: float
    peakedness: float


def overflow_moments(*, servers: int, traffic: float) -> OverflowMoments:
    """Riordan's moments of the traffic that ``traffic`` erlangs of Poisson
    traffic overflow from ``servers`` servers."""
    return OverflowMoments(*_busyhour.overflow_moments(int(servers), float(traffic)))


class EquivalentRandom(NamedTuple):
    """The equivalent random group: Poisson ``traffic`` on ``servers``
    (fractional) servers whose overflow has the given mean and variance."""

    traffic: float
    servers: float


def equivalent_random(*, mean: float, variance: float, exact: bool = False) -> EquivalentRandom:
    """Wilkinson's equivalent random method: Rapp's approximation, or with
    ``exact=True`` the group whose Riordan moments match exactly."""
    return EquivalentRandom(*_busyhour.equivalent_random(float(mean), float(variance), bool(exact)))


class FinalGroup(NamedTuple):
    """A final group offered overflow traffic, by the equivalent random method."""

    offered_mean: float
    offered_variance: float
    peakedness: float
    equivalent_traffic: Optional[float]
    equivalent_servers: Optional[float]
    lost_traffic: float
    final_blocking: float
    total_loss: float


def final_group(
    *, primaries: Sequence[Tuple[float, int]], servers: int, direct: float = 0.0
) -> FinalGroup:
    """The final group of ``servers`` servers offered the overflow of the
    first-choice groups ``primaries`` (each ``(traffic, servers)``) plus
    ``direct`` erlangs of Poisson traffic."""
    prim = [(float(a), int(n)) for a, n in primaries]
    return FinalGroup(**_busyhour.final_group(prim, float(direct), int(servers)))


def kaufman_roberts(*, capacity: int, classes: Sequence[Tuple[float, int]]) -> List[float]:
    """Kaufman-Roberts: each class's blocking on ``capacity`` channels;
    ``classes`` are ``(traffic in erlangs, channels per call)``."""
    return _busyhour.kaufman_roberts(int(capacity), [(float(a), int(b)) for a, b in classes])
