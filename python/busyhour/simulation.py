"""Scenarios and the simulation commands: run, size, sweep, records.

A scenario comes from a TOML file (a path), TOML text (:func:`loads`) or a
dict of the file's shape (:func:`from_dict`); the library validates it with
the binary's messages and raises :class:`ScenarioError` (a ``ValueError``).

Each command returns a result whose ``to_dict()`` is the document the
binary prints with ``--json`` (the same serde types, the same keys; see
docs/json.md) and whose ``to_frame()`` is a tidy pandas DataFrame (pandas
is imported only then). The simulation runs on the library's own worker
threads with the GIL released; Ctrl-C stops it after the replications in
progress and raises ``KeyboardInterrupt`` (the partial result is
discarded).
"""

from __future__ import annotations

import copy
import json
import os
from typing import Any, Dict, Iterable, List, Mapping, Optional, Sequence, Tuple, Union

from . import _busyhour
from ._busyhour import ScenarioError

__all__ = [
    "Scenario",
    "ScenarioError",
    "load",
    "loads",
    "from_dict",
    "check",
    "run",
    "size",
    "staffing",
    "sweep",
    "records",
    "compare",
    "explain",
    "CheckResult",
    "RunResult",
    "SizeResult",
    "CostResult",
    "StaffingResult",
    "SweepResult",
    "RecordsResult",
    "CompareResult",
    "ExplainResult",
]

PathLike = Union[str, "os.PathLike[str]"]


class Scenario:
    """A validated scenario (the library's compiled model)."""

    __slots__ = ("_model",)

    def __init__(self, model: Any) -> None:
        self._model = model

    @property
    def title(self) -> str:
        """The scenario's title."""
        return self._model.title

    @property
    def file(self) -> str:
        """The name that stands for the scenario's file in messages and documents."""
        return self._model.file

    @property
    def streams(self) -> List[str]:
        """The streams' names, in file order."""
        return self._model.streams

    @property
    def groups(self) -> List[str]:
        """The groups' names, in file order."""
        return self._model.groups

    @property
    def seed(self) -> int:
        """The master seed of the scenario's plan."""
        return self._model.seed

    def __repr__(self) -> str:
        return f"Scenario({self.title!r}, streams={self.streams}, groups={self.groups})"


def load(path: PathLike, *, data_dir: Optional[PathLike] = None) -> Scenario:
    """Read and validate a scenario file; with ``data_dir``, refuse data files
    outside that folder (as the binary's ``--data-dir``)."""
    return Scenario(_busyhour.load_file(os.fspath(path), None if data_dir is None else os.fspath(data_dir)))


def loads(text: str, *, name: str = "<string>", base: PathLike = ".") -> Scenario:
    """Validate scenario TOML text; ``name`` stands for the file in messages,
    data paths are relative to ``base``."""
    return Scenario(_busyhour.parse_text(text, name, os.fspath(base)))


def from_dict(table: Mapping[str, Any], *, name: str = "<dict>", base: PathLike = ".") -> Scenario:
    """Validate a dict of the scenario file's shape: ``{"simulation": {...},
    "group": [{...}], "stream": [{...}]}`` with the file's keys and values
    (durations and rates as the file writes them: ``"3m"``, ``"120/h"``). A
    key whose value is None is left out."""
    if not isinstance(table, dict):
        table = dict(table)
    return Scenario(_busyhour.parse_table(table, name, os.fspath(base)))


def _scenario(source: Union[Scenario, Mapping[str, Any], PathLike]) -> Scenario:
    if isinstance(source, Scenario):
        return source
    if isinstance(source, Mapping):
        return from_dict(source)
    if isinstance(source, (str, os.PathLike)):
        return load(source)
    raise TypeError(
        f"a scenario is a Scenario, a dict or a file path, not {type(source).__name__} "
        "(TOML text: busyhour.loads(text))"
    )


def _is_estimate(value: Any) -> bool:
    return isinstance(value, dict) and "mean" in value and "estimator" in value


def _figure_rows(
    doc: Mapping[str, Any], base: Dict[str, Any], intervals: bool = True
) -> Iterable[Dict[str, Any]]:
    """One row per figure and scope of a run document, then per interval."""

    def rows_of(entries: Sequence[Mapping[str, Any]], kind: str, extra: Dict[str, Any]):
        for entry in entries:
            for figure in sorted(entry):
                est = entry[figure]
                if not _is_estimate(est):
                    continue
                formula = est.get("formula") or {}
                yield {
                    **base,
                    "kind": kind,
                    "name": entry.get("name"),
                    **extra,
                    "figure": figure,
                    "mean": est.get("mean"),
                    "half_width": est.get("half_width"),
                    "low": est.get("low"),
                    "high": est.get("high"),
                    "estimator": est.get("estimator"),
                    "replications": est.get("replications"),
                    "formula": formula.get("name"),
                    "formula_value": formula.get("value"),
                }

    whole = {"interval_start_s": None, "interval_end_s": None}
    yield from rows_of(doc.get("streams", []), "stream", whole)
    yield from rows_of(doc.get("groups", []), "group", whole)
    if intervals:
        for iv in doc.get("intervals", []) or []:
            span = {"interval_start_s": iv.get("start_s"), "interval_end_s": iv.get("end_s")}
            yield from rows_of(iv.get("streams", []), "stream", span)
            yield from rows_of(iv.get("groups", []), "group", span)


_FIGURE_COLUMNS = [
    "kind",
    "name",
    "interval_start_s",
    "interval_end_s",
    "figure",
    "mean",
    "half_width",
    "low",
    "high",
    "estimator",
    "replications",
    "formula",
    "formula_value",
]


def _frame(rows: Iterable[Dict[str, Any]], columns: List[str]):
    try:
        import pandas
    except ImportError as e:
        raise ImportError("to_frame() needs pandas: pip install pandas") from e
    return pandas.DataFrame(list(rows), columns=columns)


class _Result:
    """A command's document, as the binary's ``--json`` prints it."""

    __slots__ = ("_text", "_doc")

    def __init__(self, text: str) -> None:
        self._text = text
        self._doc = json.loads(text)

    def to_dict(self) -> Dict[str, Any]:
        """The document as a dict (a copy): the keys of docs/json.md."""
        return copy.deepcopy(self._doc)

    def to_json(self) -> str:
        """The document's JSON text, byte for byte the binary's ``--json``."""
        return self._text

    @property
    def caution(self) -> str:
        """The safety caution every document carries."""
        return self._doc["caution"]

    @property
    def partial(self) -> bool:
        """Whether the command stopped early (never true here: an interrupted
        command raises KeyboardInterrupt)."""
        return bool(self._doc.get("partial", False))

    def __getitem__(self, key: str) -> Any:
        return self._doc[key]

    def __repr__(self) -> str:
        return f"{type(self).__name__}({self._doc.get('scenario', self._doc.get('file'))!r})"


class CheckResult(_Result):
    """The result of :func:`check`."""

    @property
    def passed(self) -> bool:
        """Whether the scenario passed the check (no problem found)."""
        return not self._doc.get("problems")

    @property
    def problems(self) -> List[str]:
        """The problems found, as sentences (each fails the check)."""
        return list(self._doc.get("problems", []))

    @property
    def notes(self) -> List[str]:
        """The notes, as sentences (they do not fail the check)."""
        return list(self._doc.get("notes", []))

    def to_frame(self):
        """One row per closed-form figure of each stream and group: ``kind``,
        ``name``, ``figure``, ``formula``, ``formula_value``."""
        rows = []
        for kind in ("stream", "group"):
            for entry in self._doc.get(kind + "s", []):
                formulas = entry.get("formulas") or {}
                for figure in sorted(formulas):
                    value = formulas[figure]
                    rows.append(
                        {
                            "kind": kind,
                            "name": entry.get("name"),
                            "figure": figure,
                            "formula": value["name"],
                            "formula_value": value["value"],
                        }
                    )
        return _frame(rows, ["kind", "name", "figure", "formula", "formula_value"])


class RunResult(_Result):
    """The result of :func:`run`."""

    def estimate(self, name: str, figure: str, *, kind: Optional[str] = None) -> Dict[str, Any]:
        """The whole-period estimate of ``figure`` (a figure name such as
        ``"loss"``) of the stream or group ``name``: a dict with ``mean``,
        ``half_width``, ``low``, ``high``, ``replications`` and, where one
        applies, ``formula``."""
        kinds = [kind] if kind else ["stream", "group"]
        for k in kinds:
            for entry in self._doc.get(k + "s", []):
                if entry.get("name") == name and _is_estimate(entry.get(figure)):
                    return copy.deepcopy(entry[figure])
        raise KeyError(f"no {figure} of a stream or group named {name!r}")

    def to_frame(self):
        """One row per figure and scope (stream or group), then per interval
        where the scenario sets ``interval``: ``kind``, ``name``,
        ``interval_start_s``/``interval_end_s`` (None for the whole period),
        ``figure``, ``mean``, ``half_width``, ``low``, ``high``, ``estimator``,
        ``replications``, ``formula``, ``formula_value``."""
        return _frame(_figure_rows(self._doc, {}), _FIGURE_COLUMNS)


class SizeResult(_Result):
    """The result of :func:`size`."""

    @property
    def servers(self) -> Optional[int]:
        """The fewest servers meeting every goal; None when none was found."""
        return self._doc["servers"]

    @property
    def formula_servers(self) -> Optional[int]:
        """The closed-form answer, where the formulas cover every goal."""
        return self._doc["formula_servers"]

    def to_frame(self):
        """One row per goal at the answer and at one server fewer:
        ``servers``, ``at`` (``answer`` or ``one_fewer``), ``goal``,
        ``verdict``, the deciding estimate (``mean``, ``half_width``, ``low``,
        ``high``, ``replications``) and which stream or group decided it."""
        rows = []
        for at in ("at_answer", "one_fewer"):
            judged = self._doc.get(at)
            if not judged:
                continue
            for g in judged["goals"]:
                est = g.get("estimate") or {}
                decided = g.get("decided_by") or {}
                ((kind, name),) = decided.items() if decided else ((None, None),)
                rows.append(
                    {
                        "servers": judged["servers"],
                        "at": "answer" if at == "at_answer" else "one_fewer",
                        "goal": g["goal"],
                        "verdict": g["verdict"],
                        "kind": kind,
                        "name": name,
                        "mean": est.get("mean"),
                        "half_width": est.get("half_width"),
                        "low": est.get("low"),
                        "high": est.get("high"),
                        "replications": est.get("replications"),
                    }
                )
        columns = ["servers", "at", "goal", "verdict", "kind", "name", "mean", "half_width", "low", "high", "replications"]
        return _frame(rows, columns)


class CostResult(_Result):
    """The result of :func:`size` with ``goals="cost"``: the size of least
    expected total cost under the scenario's ``[prices]``."""

    @property
    def servers(self) -> Optional[int]:
        """The size of least expected cost (a whole number of modules)."""
        return self._doc["servers"]

    @property
    def formula_servers(self) -> Optional[int]:
        """The closed-form optimum (Erlang B's marginal rule), where it
        applies."""
        return self._doc["formula_servers"]

    @property
    def decided(self) -> bool:
        """Whether the least-cost size beats its neighbours on paired
        seeds beyond their intervals."""
        return self._doc["decided"]

    def to_frame(self):
        """The cost curve, one row per size and part (``servers_cost``,
        ``lost_calls_cost``, ``abandoned_calls_cost``, ``waiting_cost``,
        ``total``): ``servers``, ``part``, the estimate (``mean``,
        ``half_width``, ``low``, ``high``, ``replications``) and, on the
        total, the closed form's total where Erlang B applies."""
        parts = ["servers_cost", "lost_calls_cost", "abandoned_calls_cost", "waiting_cost", "total"]
        rows = []
        for point in self._doc["curve"]:
            for part in parts:
                est = point.get(part) or {}
                rows.append(
                    {
                        "servers": point["servers"],
                        "part": part,
                        "mean": est.get("mean"),
                        "half_width": est.get("half_width"),
                        "low": est.get("low"),
                        "high": est.get("high"),
                        "replications": est.get("replications"),
                        "formula_total": point.get("formula_total") if part == "total" else None,
                    }
                )
        columns = ["servers", "part", "mean", "half_width", "low", "high", "replications", "formula_total"]
        return _frame(rows, columns)


class StaffingResult(_Result):
    """The result of :func:`staffing`: servers per reporting interval."""

    @property
    def met(self) -> bool:
        """Whether every interval meets every goal under the simulated plan."""
        return self._doc["met"]

    @property
    def servers(self) -> List[int]:
        """The simulated plan's servers taking calls, one per interval."""
        return [i["servers"] for i in self._doc["intervals"]]

    @property
    def scheduled(self) -> List[int]:
        """The simulated plan's servers to schedule (shrinkage added)."""
        return [i["scheduled"] for i in self._doc["intervals"]]

    def to_frame(self):
        """One row per interval and goal: ``start_s``, ``end_s``,
        ``offered_traffic``, the requirements (``stationary``,
        ``modified``, ``servers`` simulated, ``scheduled``), the goal, its
        ``verdict`` and the estimate under the simulated plan (``mean``,
        ``half_width``, ``low``, ``high``, ``replications``)."""
        rows = []
        for i in self._doc["intervals"]:
            for g in i["goals"]:
                est = g.get("estimate") or {}
                rows.append(
                    {
                        "start_s": i["start_s"],
                        "end_s": i["end_s"],
                        "offered_traffic": i["offered_traffic"],
                        "stationary": i["stationary"],
                        "modified": i["modified"],
                        "servers": i["servers"],
                        "scheduled": i["scheduled"],
                        "goal": g["goal"],
                        "verdict": g["verdict"],
                        "mean": est.get("mean"),
                        "half_width": est.get("half_width"),
                        "low": est.get("low"),
                        "high": est.get("high"),
                        "replications": est.get("replications"),
                    }
                )
        columns = [
            "start_s", "end_s", "offered_traffic", "stationary", "modified", "servers", "scheduled",
            "goal", "verdict", "mean", "half_width", "low", "high", "replications",
        ]
        return _frame(rows, columns)


class SweepResult(_Result):
    """The result of :func:`sweep`."""

    def to_frame(self):
        """One row per step, figure and scope (and interval): ``value`` (the
        load scale or the servers), ``servers`` in a grid, then the columns of
        :meth:`RunResult.to_frame`."""
        rows = []
        for step in self._doc["steps"]:
            base = {"value": step["value"], "servers": step.get("servers")}
            rows.extend(_figure_rows(step["result"], base))
        return _frame(rows, ["value", "servers"] + _FIGURE_COLUMNS)


class RecordsResult(_Result):
    """The result of :func:`records`."""

    def to_frame(self):
        """One row per interval in time order: ``start`` (local date and
        time), ``calls``, ``carried_traffic`` and ``offered_traffic`` (E), and
        with outcomes ``answered``, ``blocked``, ``abandoned``."""
        columns = ["start", "calls", "answered", "blocked", "abandoned", "carried_traffic", "offered_traffic"]
        return _frame(self._doc["intervals"], columns)


def _estimate_columns(prefix: str, e: Optional[Mapping[str, Any]]) -> Dict[str, Any]:
    """An estimate's mean, half-width and bounds as ``prefix_*`` columns."""
    e = e or {}
    return {f"{prefix}_{k}": e.get(k) for k in ("mean", "half_width", "low", "high")}


class CompareResult(_Result):
    """The paired comparison of two designs (``busyhour compare --json``):
    every common figure of A and B and the difference B - A with its 95%
    interval from the paired replications."""

    def to_frame(self):
        """One row per common figure and scope: ``kind``, ``name``,
        ``figure``, A's, B's and the difference's ``*_mean``,
        ``*_half_width``, ``*_low``, ``*_high``, the ``unpaired_half_width``
        (two independent intervals), ``decided`` and ``verdict``."""
        rows = []
        for f in self.to_dict().get("figures", []):
            row = {"kind": f.get("kind"), "name": f.get("name"), "figure": f.get("figure")}
            for side in ("a", "b", "difference"):
                row.update(_estimate_columns(side, f.get(side)))
            row["unpaired_half_width"] = f.get("unpaired_half_width")
            row["decided"] = f.get("decided")
            row["verdict"] = f.get("verdict")
            rows.append(row)
        columns = ["kind", "name", "figure"]
        for side in ("a", "b", "difference"):
            columns += [f"{side}_{k}" for k in ("mean", "half_width", "low", "high")]
        return _frame(rows, columns + ["unpaired_half_width", "decided", "verdict"])


class ExplainResult(_Result):
    """The assumption ladder (``busyhour explain --json``): each rung from
    the textbook model to the scenario, and what each effect accounts for."""

    def to_frame(self):
        """One row per rung and figure (``rung``, ``figure``, ``mean``,
        ``half_width``, ``low``, ``high``), in the ladder's order."""
        rows = []
        for r in self.to_dict().get("rungs", []):
            for f in r.get("figures", []):
                row = {"rung": r.get("rung"), "figure": f.get("figure")}
                row.update({k: (f.get("estimate") or {}).get(k) for k in ("mean", "half_width", "low", "high")})
                rows.append(row)
        return _frame(rows, ["rung", "figure", "mean", "half_width", "low", "high"])

    def effects_frame(self):
        """One row per effect and figure: ``effect``, ``figure``, the
        step's and the effect-alone ``*_mean`` and ``*_half_width``, and
        ``share_of_gap``."""
        rows = []
        for e in self.to_dict().get("effects", []):
            row = {"effect": e.get("effect"), "figure": e.get("figure")}
            for part in ("step", "alone"):
                est = e.get(part) or {}
                row[f"{part}_mean"] = est.get("mean")
                row[f"{part}_half_width"] = est.get("half_width")
            row["share_of_gap"] = e.get("share_of_gap")
            rows.append(row)
        return _frame(
            rows,
            ["effect", "figure", "step_mean", "step_half_width", "alone_mean", "alone_half_width", "share_of_gap"],
        )


def compare(
    a: Union[Scenario, Mapping[str, Any], PathLike],
    b: Union[Scenario, Mapping[str, Any], PathLike],
    *,
    replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> CompareResult:
    """Design ``b`` against design ``a`` with common random numbers, as
    ``busyhour compare A B``: both run on A's plan (``replications`` and
    ``seed`` override it); every common figure with the difference B - A
    and its paired 95% interval, far narrower than two separate ones."""
    return CompareResult(
        _busyhour.compare(
            _scenario(a)._model,
            _scenario(b)._model,
            replications=replications,
            seed=seed,
            threads=threads,
        )
    )


def explain(
    scenario: Union[Scenario, Mapping[str, Any], PathLike],
    *,
    figures: Sequence[str] = (),
    replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> ExplainResult:
    """The assumption ladder, as ``busyhour explain``: from the textbook
    model of the design to the scenario, one real effect at a time on
    common random numbers; ``figures`` names the figures explained
    (default: each stream's loss and service level, each group's
    occupancy)."""
    return ExplainResult(
        _busyhour.explain(
            _scenario(scenario)._model,
            figures=list(figures),
            replications=replications,
            seed=seed,
            threads=threads,
        )
    )


def check(scenario: Union[Scenario, Mapping[str, Any], PathLike]) -> CheckResult:
    """Check a scenario without running it, as ``busyhour check``: the model
    in plain words, the closed-form figures of each stream and group, and
    any problems and notes. A scenario the library refuses raises
    ScenarioError instead."""
    return CheckResult(_busyhour.check(_scenario(scenario)._model))


def run(
    scenario: Union[Scenario, Mapping[str, Any], PathLike],
    *,
    replications: Optional[int] = None,
    precision: Optional[float] = None,
    max_replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> RunResult:
    """Simulate the scenario and estimate every figure with its 95%
    interval, as ``busyhour run``: ``replications`` overrides the file's
    count, ``precision`` (a relative half-width such as 0.02) adds
    replications until every key figure reaches it (up to
    ``max_replications``), ``seed`` the master seed, ``threads`` the worker
    threads (results do not depend on it)."""
    s = _scenario(scenario)
    return RunResult(
        _busyhour.run(
            s._model,
            replications=replications,
            precision=precision,
            max_replications=max_replications,
            seed=seed,
            threads=threads,
        )
    )


def size(
    scenario: Union[Scenario, Mapping[str, Any], PathLike],
    *,
    group: str,
    goals: Union[str, Sequence[str]],
    replications: Optional[int] = None,
    precision: Optional[float] = None,
    max_replications: Optional[int] = None,
    seed: Optional[int] = None,
    decide_within: Optional[int] = None,
    threads: Optional[int] = None,
) -> Union[SizeResult, CostResult]:
    """The fewest servers on ``group`` for which every goal holds, as
    ``busyhour size``: goals as the binary writes them (``"loss<=1%"``,
    ``"office.service_level>=80%"``, ``"wait_p90<=30s"``). ``goals="cost"``
    alone asks instead for the size of least expected cost under the
    scenario's ``[prices]`` (``busyhour size --goal cost``) and returns a
    :class:`CostResult`."""
    s = _scenario(scenario)
    goal_list = [goals] if isinstance(goals, str) else list(goals)
    if [g.strip() for g in goal_list] == ["cost"]:
        if decide_within is not None:
            raise ValueError("decide_within: the least-cost size decides on the replications asked for; leave it out")
        return CostResult(
            _busyhour.size_cost(
                s._model,
                group,
                replications=replications,
                precision=precision,
                max_replications=max_replications,
                seed=seed,
                threads=threads,
            )
        )
    return SizeResult(
        _busyhour.size(
            s._model,
            group,
            goal_list,
            replications=replications,
            precision=precision,
            max_replications=max_replications,
            seed=seed,
            decide_within=decide_within,
            threads=threads,
        )
    )


def staffing(
    scenario: Union[Scenario, Mapping[str, Any], PathLike],
    *,
    group: str,
    goals: Union[str, Sequence[str]],
    rounds: int = 40,
    replications: Optional[int] = None,
    precision: Optional[float] = None,
    max_replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> StaffingResult:
    """The fewest servers on ``group`` in each reporting interval (the
    scenario needs ``interval`` in ``[simulation]``) for which every
    interval meets every goal, as ``busyhour size --per-interval``: the
    whole day is simulated again after each adjustment (at most ``rounds``
    times), beside the stationary and modified-offered-load requirements,
    and, where the group has ``shift_types``, the shift plan covering it."""
    s = _scenario(scenario)
    goal_list = [goals] if isinstance(goals, str) else list(goals)
    return StaffingResult(
        _busyhour.staffing(
            s._model,
            group,
            goal_list,
            rounds=rounds,
            replications=replications,
            precision=precision,
            max_replications=max_replications,
            seed=seed,
            threads=threads,
        )
    )


def sweep(
    scenario: Union[Scenario, Mapping[str, Any], PathLike],
    *,
    scale: Optional[str] = None,
    servers: Optional[str] = None,
    figures: Sequence[str] = (),
    goals: Union[str, Sequence[str]] = (),
    replications: Optional[int] = None,
    precision: Optional[float] = None,
    max_replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> SweepResult:
    """Run the scenario at a series of load scales (``scale="0.8:1.6:0.1"``
    or ``"office=0.8:1.6:0.1"``) or group sizes (``servers="trunks=40:60"``),
    or both (a grid), as ``busyhour sweep``; ``figures`` keeps only those
    figures, ``goals`` are judged at every step."""
    s = _scenario(scenario)
    goal_list = [goals] if isinstance(goals, str) else list(goals)
    return SweepResult(
        _busyhour.sweep(
            s._model,
            scale=scale,
            servers=servers,
            figures=list(figures),
            goals=goal_list,
            replications=replications,
            precision=precision,
            max_replications=max_replications,
            seed=seed,
            threads=threads,
        )
    )


def records(
    source: Any,
    *,
    interval: Optional[str] = None,
    start: Optional[str] = None,
    date: Optional[str] = None,
    duration: Optional[str] = None,
    outcome: Optional[str] = None,
    wait: Optional[str] = None,
    outcome_words: Optional[Mapping[str, str]] = None,
    unix_offset_s: Optional[int] = None,
    days: Optional[str] = None,
    skip_bad: bool = False,
    name: str = "<frame>",
) -> RecordsResult:
    """Analyse measured call records, as ``busyhour records``: traffic per
    interval, the busy hour, the holding-time law, peakedness. ``source``
    is a CSV file path, or a pandas DataFrame with the same columns (one row
    a call; written as CSV for the library's reader). ``interval`` as
    ``"15m"``; the column options name the columns when they are not the
    usual names; ``outcome_words`` maps a system's words to ``answered``,
    ``blocked`` or ``abandoned``."""
    words: List[Tuple[str, str]] = list((outcome_words or {}).items())
    options = dict(
        interval=interval,
        start=start,
        date=date,
        duration=duration,
        outcome=outcome,
        wait=wait,
        outcome_words=words,
        unix_offset_s=unix_offset_s,
        days=days,
        skip_bad=skip_bad,
    )
    if isinstance(source, (str, os.PathLike)):
        return RecordsResult(_busyhour.records(path=os.fspath(source), **options))
    to_csv = getattr(source, "to_csv", None)
    if to_csv is None:
        raise TypeError(f"call records are a CSV file path or a pandas DataFrame, not {type(source).__name__}")
    return RecordsResult(_busyhour.records(text=to_csv(index=False), name=name, **options))
