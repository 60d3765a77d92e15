"""run, size, sweep and records against the binary: the same document as
`busyhour CMD --json` for the same scenario and seed (figures identical,
not close), the tidy frames read from it, the threads and Ctrl-C."""

import json
import signal
import threading
import _thread

import pytest

import busyhour as bh
from conftest import GOLDEN_INPUTS, SCENARIOS, run_binary


def binary_json(binary, *args):
    quiet = [] if args[0] == "records" else ["--quiet"]
    stdout, stderr, status = run_binary(binary, *args, "--json", *quiet)
    assert status in (0, 1), stderr
    return json.loads(stdout)


def without_wall(doc):
    """wall_s is the only key that depends on the machine's speed."""
    doc = dict(doc)
    doc.pop("wall_s", None)
    return doc


@pytest.mark.parametrize("name", ["queue.toml", "overflow.toml", "peak.toml"])
def test_run_is_the_binarys_document(binary, name):
    path = GOLDEN_INPUTS / name
    expected = binary_json(binary, "run", path, "--seed", 11, "--replications", 6)
    result = bh.run(path, seed=11, replications=6)
    assert result.to_dict() == expected
    stdout, _, _ = run_binary(binary, "run", path, "--seed", 11, "--replications", 6, "--json", "--quiet")
    assert result.to_json() == stdout


def test_run_with_a_precision_goal_is_the_binarys(binary):
    path = GOLDEN_INPUTS / "queue.toml"
    expected = binary_json(binary, "run", path, "--precision", "20%", "--max-replications", 60)
    assert bh.run(path, precision=0.2, max_replications=60).to_dict() == expected


def test_results_do_not_depend_on_threads():
    path = SCENARIOS / "campus-overflow.toml"
    one = bh.run(path, replications=8, threads=1).to_dict()
    two = bh.run(path, replications=8, threads=2).to_dict()
    assert one == two


def test_run_frame_has_one_row_per_figure_and_scope():
    result = bh.run(GOLDEN_INPUTS / "peak.toml", replications=4)
    doc = result.to_dict()
    frame = result.to_frame()
    estimates = [
        (entry["name"], figure, est)
        for scope in [doc] + doc["intervals"]
        for kind in ("streams", "groups")
        for entry in scope[kind]
        for figure, est in entry.items()
        if isinstance(est, dict) and "estimator" in est
    ]
    assert len(frame) == len(estimates) > 0
    assert list(frame.columns[:5]) == ["kind", "name", "interval_start_s", "interval_end_s", "figure"]
    whole = frame[frame["interval_start_s"].isna()]
    loss = whole[(whole["kind"] == "stream") & (whole["figure"] == "loss")].iloc[0]
    assert loss["mean"] == doc["streams"][0]["loss"]["mean"]
    assert loss["half_width"] == doc["streams"][0]["loss"]["half_width"]
    assert loss["replications"] == 4
    congestion = whole[(whole["kind"] == "group") & (whole["figure"] == "time_congestion")].iloc[0]
    formula = doc["groups"][0]["time_congestion"]["formula"]
    assert congestion["formula"] == formula["name"] and congestion["formula_value"] == formula["value"]
    assert frame["interval_start_s"].notna().sum() > 0
    assert result.estimate("callers", "loss") == doc["streams"][0]["loss"]


def test_size_is_the_binarys_document(binary):
    path = GOLDEN_INPUTS / "queue.toml"
    args = ["--group", "agents", "--goal", "service_level>=70%", "--replications", 8]
    expected = binary_json(binary, "size", path, *args)
    result = bh.size(path, group="agents", goals="service_level>=70%", replications=8)
    assert without_wall(result.to_dict()) == without_wall(expected)
    assert result.servers == expected["servers"]
    frame = result.to_frame()
    assert set(frame["at"]) <= {"answer", "one_fewer"} and len(frame) >= 1
    assert frame.iloc[0]["servers"] == expected["servers"]


def test_size_for_least_cost_is_the_binarys_document(binary):
    path = SCENARIOS / "gateway-costs.toml"
    args = ["--group", "ports", "--goal", "cost", "--replications", 40]
    expected = binary_json(binary, "size", path, *args)
    result = bh.size(path, group="ports", goals="cost", replications=40)
    assert isinstance(result, bh.CostResult)
    assert without_wall(result.to_dict()) == without_wall(expected)
    assert result.servers == expected["servers"]
    frame = result.to_frame()
    assert len(frame) == 5 * len(expected["curve"])
    best = frame[(frame["part"] == "total") & (frame["servers"] == result.servers)]
    assert best.iloc[0]["mean"] == min(p["total"]["mean"] for p in expected["curve"])
    # "cost" stands alone.
    with pytest.raises(ValueError, match="^goals: 'cost' stands alone"):
        bh.size(path, group="ports", goals=["cost", "loss<=1%"])


def test_staffing_is_the_binarys_document(binary):
    path = SCENARIOS / "clinic-day.toml"
    goal = "service_level>=80%"
    args = ["--group", "agents", "--goal", goal, "--per-interval", "--replications", 20, "--rounds", 6]
    expected = binary_json(binary, "size", path, *args)
    result = bh.staffing(path, group="agents", goals=goal, replications=20, rounds=6)
    assert isinstance(result, bh.StaffingResult)
    assert without_wall(result.to_dict()) == without_wall(expected)
    assert result.servers == [i["servers"] for i in expected["intervals"]]
    frame = result.to_frame()
    assert len(frame) == len(expected["intervals"])
    assert list(frame["scheduled"]) == result.scheduled


def test_staffing_refuses_what_it_cannot_size():
    with pytest.raises(ValueError, match="^scenario: .*queue.toml: staffing sizes each reporting interval"):
        bh.staffing(GOLDEN_INPUTS / "queue.toml", group="agents", goals="service_level>=80%")
    path = SCENARIOS / "clinic-day.toml"
    with pytest.raises(ValueError, match="^goals: wait_p90<=30s: that figure is not reported per interval"):
        bh.staffing(path, group="agents", goals="wait_p90<=30s")
    with pytest.raises(ValueError, match="^rounds: 1: expected 2 to 1000"):
        bh.staffing(path, group="agents", goals="service_level>=80%", rounds=1)


def test_size_refuses_an_unknown_group_and_goal():
    path = GOLDEN_INPUTS / "queue.toml"
    with pytest.raises(ValueError, match="^group: nobody: no group of .*queue.toml has that name$"):
        bh.size(path, group="nobody", goals="loss<=1%")
    with pytest.raises(ValueError, match="^goals: goal 'speed<=1'"):
        bh.size(path, group="agents", goals="speed<=1")


def test_sweep_is_the_binarys_document(binary):
    path = GOLDEN_INPUTS / "overflow.toml"
    args = ["--scale", "0.8:1.2:0.2", "--replications", 3, "--figure", "loss", "--goal", "loss<=5%"]
    expected = binary_json(binary, "sweep", path, *args)
    result = bh.sweep(path, scale="0.8:1.2:0.2", replications=3, figures=["loss"], goals=["loss<=5%"])
    assert result.to_dict() == expected
    frame = result.to_frame()
    assert sorted(set(frame["value"])) == pytest.approx([0.8, 1.0, 1.2])
    assert set(frame["figure"]) == {"loss"}


def test_sweep_of_servers_is_the_binarys_document(binary):
    path = GOLDEN_INPUTS / "queue.toml"
    expected = binary_json(binary, "sweep", path, "--servers", "agents=5:7", "--replications", 3)
    assert bh.sweep(path, servers="agents=5:7", replications=3).to_dict() == expected


def test_sweep_refuses_a_bad_range():
    with pytest.raises(ValueError, match="^scale: '0.8-1.2': expected a range"):
        bh.sweep(GOLDEN_INPUTS / "overflow.toml", scale="0.8-1.2")


def test_records_is_the_binarys_document(binary):
    path = GOLDEN_INPUTS / "calls.csv"
    expected = binary_json(binary, "records", path, "--interval", "1h")
    result = bh.records(path, interval="1h")
    assert result.to_dict() == expected
    frame = result.to_frame()
    assert len(frame) == len(expected["intervals"])
    assert frame["calls"].sum() == sum(i["calls"] for i in expected["intervals"])


def test_records_from_a_data_frame():
    pandas = pytest.importorskip("pandas")
    path = GOLDEN_INPUTS / "calls.csv"
    frame = pandas.read_csv(path, comment="#", dtype=str, keep_default_na=False)
    from_frame = bh.records(frame, interval="1h", name=str(path)).to_dict()
    from_file = bh.records(path, interval="1h").to_dict()
    assert from_frame == from_file


def test_records_errors_are_value_errors():
    with pytest.raises(ValueError, match="cannot read the call records"):
        bh.records(GOLDEN_INPUTS / "no-such.csv")
    with pytest.raises(ValueError, match="interval"):
        bh.records(GOLDEN_INPUTS / "calls.csv", interval="7m")


def test_bad_overrides_are_refused():
    path = GOLDEN_INPUTS / "queue.toml"
    with pytest.raises(ValueError, match="^replications: 1: at least 2"):
        bh.run(path, replications=1)
    with pytest.raises(ValueError, match="^precision: "):
        bh.run(path, precision=1.5)
    with pytest.raises(ValueError, match="^threads: 0"):
        bh.run(path, threads=0)


LONG = {
    "simulation": {"length": "1000h", "replications": 2000, "seed": 1},
    "group": [{"name": "trunks", "servers": 30}],
    "stream": [
        {
            "name": "calls",
            "arrivals": {"law": "poisson", "rate": "600/h"},
            "holding": {"law": "exponential", "mean": "2m"},
            "route": ["trunks"],
        }
    ],
}


def _assert_interrupted(interrupt):
    # LONG is about a minute of work (so that a lost interrupt fails the
    # test instead of hanging it); `interrupt` runs on a timer thread after
    # half a second.
    #
    # A process started in the background by a non-interactive shell (as a
    # CI job may start this suite) inherits SIGINT ignored, and Python then
    # leaves it ignored: no Ctrl-C could reach it, and interrupt_main does
    # nothing (a fresh-clone CI run hung here). A terminal or a notebook has
    # Python's own handler; the test installs it for its duration.
    previous = signal.signal(signal.SIGINT, signal.default_int_handler)
    timer = threading.Timer(0.5, interrupt)
    timer.start()
    try:
        with pytest.raises(KeyboardInterrupt):
            bh.run(LONG)
        # SIGINT's handler is the one it was before the call.
        assert signal.getsignal(signal.SIGINT) is signal.default_int_handler
    finally:
        timer.cancel()
        signal.signal(signal.SIGINT, previous)


def test_ctrl_c_stops_the_simulation_with_keyboard_interrupt():
    # As Ctrl-C would: interrupt_main raises SIGINT's KeyboardInterrupt in
    # the main thread.
    _assert_interrupted(_thread.interrupt_main)
    # The package is usable afterwards.
    assert bh.erlang_b_servers(traffic=10.0, grade=0.01) == 18


def test_ctrl_c_stops_even_when_its_exception_is_discarded():
    # Python runs a signal's handler wherever the main thread next runs
    # Python code; in a finalizer its KeyboardInterrupt is discarded. Here
    # the handler is called from another thread and its exception dropped,
    # as such a place would: the run must stop all the same.
    def swallowed():
        handler = signal.getsignal(signal.SIGINT)
        try:
            handler(signal.SIGINT, None)
        except KeyboardInterrupt:
            pass

    _assert_interrupted(swallowed)


@pytest.mark.parametrize("name", ["peak.toml", "overloaded.toml", "overflow.toml"])
def test_check_is_the_binarys_document(binary, name):
    path = GOLDEN_INPUTS / name
    stdout, _, status = run_binary(binary, "check", path, "--json")
    result = bh.check(path)
    assert result.to_json() == stdout
    # The binary's exit status 1 is a failed check.
    assert result.passed == (status == 0)
    frame = result.to_frame()
    doc = result.to_dict()
    expected_rows = sum(len(e.get("formulas", {})) for k in ("streams", "groups") for e in doc[k])
    assert len(frame) == expected_rows


def test_compare_is_the_binarys_document(binary):
    a, b = SCENARIOS / "campus-overflow.toml", SCENARIOS / "compare-b.toml"
    expected = binary_json(binary, "compare", a, b, "--replications", 6, "--seed", 5)
    result = bh.compare(a, b, replications=6, seed=5)
    assert without_wall(result.to_dict()) == without_wall(expected)
    frame = result.to_frame()
    assert len(frame) == len(expected["figures"])
    row = expected["figures"][0]
    assert frame["difference_mean"].iloc[0] == row["difference"]["mean"]
    assert frame["unpaired_half_width"].iloc[0] == row["unpaired_half_width"]


def test_compare_refuses_designs_of_different_lengths():
    a = bh.from_dict({"simulation": {"length": "1h", "replications": 2}, "group": [{"name": "g", "servers": 3}],
                      "stream": [{"name": "s", "arrivals": {"law": "poisson", "rate": "60/h"},
                                  "holding": {"law": "exponential", "mean": "2m"}, "route": ["g"]}]})
    b = bh.from_dict({"simulation": {"length": "2h", "replications": 2}, "group": [{"name": "g", "servers": 4}],
                      "stream": [{"name": "s", "arrivals": {"law": "poisson", "rate": "60/h"},
                                  "holding": {"law": "exponential", "mean": "2m"}, "route": ["g"]}]})
    with pytest.raises(ValueError, match="^b: <dict> against <dict>: "):
        bh.compare(a, b)


def test_explain_is_the_binarys_document(binary):
    path = SCENARIOS / "harbour-peak.toml"
    expected = binary_json(binary, "explain", path, "--replications", 4)
    result = bh.explain(path, replications=4)
    assert without_wall(result.to_dict()) == without_wall(expected)
    frame = result.to_frame()
    rungs = expected["rungs"]
    assert len(frame) == sum(len(r["figures"]) for r in rungs)
    assert frame["rung"].iloc[0] == rungs[0]["rung"]
    effects = result.effects_frame()
    assert len(effects) == len(expected["effects"])


def test_explain_refuses_an_unknown_figure():
    with pytest.raises(ValueError, match="^figures: "):
        bh.explain(SCENARIOS / "harbour-peak.toml", replications=2, figures=["nonsense"])
