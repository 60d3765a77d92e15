"""Type stubs of the binding module (the Rust extension). The package's
public functions are in busyhour.formulas and busyhour.simulation."""

from typing import Dict, List, Optional, Sequence, Tuple

CAUTION: str
VERSION: str

class ScenarioError(ValueError):
    """A scenario (file, TOML text or dict) that is not a valid design."""

class Model:
    @property
    def title(self) -> str: ...
    @property
    def file(self) -> str: ...
    @property
    def streams(self) -> List[str]: ...
    @property
    def groups(self) -> List[str]: ...
    @property
    def seed(self) -> int: ...

def load_file(path: str, data_dir: Optional[str] = None) -> Model: ...
def parse_text(text: str, name: str, base: str) -> Model: ...
def parse_table(table: dict, name: str, base: str) -> Model: ...
def check(model: Model) -> str: ...
def run(
    model: Model,
    replications: Optional[int] = None,
    precision: Optional[float] = None,
    max_replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> str: ...
def size(
    model: Model,
    group: str,
    goals: List[str],
    replications: Optional[int] = None,
    precision: Optional[float] = None,
    max_replications: Optional[int] = None,
    seed: Optional[int] = None,
    decide_within: Optional[int] = None,
    threads: Optional[int] = None,
) -> str: ...
def size_cost(
    model: Model,
    group: str,
    replications: Optional[int] = None,
    precision: Optional[float] = None,
    max_replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> str: ...
def staffing(
    model: Model,
    group: str,
    goals: List[str],
    rounds: int = 40,
    replications: Optional[int] = None,
    precision: Optional[float] = None,
    max_replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> str: ...
def sweep(
    model: Model,
    scale: Optional[str] = None,
    servers: Optional[str] = None,
    figures: List[str] = ...,
    goals: List[str] = ...,
    replications: Optional[int] = None,
    precision: Optional[float] = None,
    max_replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> str: ...
def compare(
    a: Model,
    b: Model,
    replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> str: ...
def explain(
    model: Model,
    figures: List[str] = ...,
    replications: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
) -> str: ...
def records(
    path: Optional[str] = None,
    text: Optional[str] = None,
    name: str = "<records>",
    interval: Optional[str] = None,
    start: Optional[str] = None,
    date: Optional[str] = None,
    duration: Optional[str] = None,
    outcome: Optional[str] = None,
    wait: Optional[str] = None,
    outcome_words: Sequence[Tuple[str, str]] = ...,
    unix_offset_s: Optional[int] = None,
    days: Optional[str] = None,
    skip_bad: bool = False,
) -> str: ...
def evaluate(name: str, args: List[float]) -> float: ...
def evaluate_many(name: str, columns: List[bytes], count: int, nan_on_error: bool) -> bytes: ...
def erlang_a(
    agents: int, traffic: float, holding_s: float, patience_s: float, within_s: Optional[float] = None
) -> Dict[str, Optional[float]]: ...
def engset(sources: int, servers: int, idle_traffic: float) -> Dict[str, float]: ...
def overflow_moments(servers: int, traffic: float) -> Tuple[float, float, float]: ...
def equivalent_random(mean: float, variance: float, exact: bool) -> Tuple[float, float]: ...
def final_group(primaries: List[Tuple[float, int]], direct: float, servers: int) -> Dict[str, Optional[float]]: ...
def kaufman_roberts(capacity: int, classes: List[Tuple[float, int]]) -> List[float]: ...
