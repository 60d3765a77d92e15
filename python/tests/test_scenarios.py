"""Scenarios from a file, TOML text or a dict: the library's validation
and messages, raised as busyhour.ScenarioError, the same text as the
binary prints (the bad-scenario corpus of the Rust tests)."""

import os

import pytest

import busyhour as bh
from conftest import BAD_SCENARIOS, GOLDEN_INPUTS, run_binary

QUEUE = {
    "title": "agents with a queue",
    "simulation": {"warmup": "40m", "length": "1h", "replications": 4, "seed": 102},
    "group": [{"name": "agents", "servers": 6, "queue": 10}],
    "stream": [
        {
            "name": "callers",
            "arrivals": {"law": "poisson", "rate": "90/h"},
            "holding": {"law": "gamma", "mean": "3m", "cv": 0.8},
            "route": ["agents"],
            "patience": {"law": "exponential", "mean": "1m"},
            "answer_within": "20s",
            "retry": {
                "chance": ["60%", "30%"],
                "delay": {"law": "exponential", "mean": "2m"},
                "max_attempts": 3,
            },
        }
    ],
}


def test_scenario_error_is_a_value_error():
    assert issubclass(bh.ScenarioError, ValueError)
    assert bh.ScenarioError.__module__ == "busyhour"


def test_a_dict_gives_the_same_model_as_its_file():
    # tests/golden/inputs/queue.toml written as a dict: the same figures
    # for the same seed, so the same model.
    from_file = bh.run(GOLDEN_INPUTS / "queue.toml").to_dict()
    from_dict = bh.run(QUEUE).to_dict()
    for key in ("streams", "groups", "replications", "seed", "warmup_s", "length_s"):
        assert from_dict[key] == from_file[key], key


def test_text_and_file_agree():
    text = (GOLDEN_INPUTS / "queue.toml").read_text()
    a = bh.run(bh.loads(text, name="queue.toml")).to_dict()
    b = bh.run(GOLDEN_INPUTS / "queue.toml").to_dict()
    assert a["streams"] == b["streams"]


def test_a_scenario_knows_its_names():
    s = bh.from_dict(QUEUE)
    assert s.streams == ["callers"] and s.groups == ["agents"] and s.seed == 102
    assert s.title == "agents with a queue"


def test_dict_values_refused_name_the_key_path():
    bad = {**QUEUE, "group": [{"name": "agents", "servers": -3}]}
    with pytest.raises(bh.ScenarioError) as e:
        bh.from_dict(bad, name="plan")
    message = str(e.value)
    assert message.startswith("plan: ")
    assert "servers" in message
    assert "\n" not in message


def test_dict_unknown_key_is_refused_without_a_line_number():
    bad = {**QUEUE, "simulation": {**QUEUE["simulation"], "lenght": "1h"}}
    with pytest.raises(bh.ScenarioError, match=r"^<dict>: simulation\.lenght: unknown field `lenght`"):
        bh.from_dict(bad)


def test_dict_value_of_another_type_is_refused():
    with pytest.raises(bh.ScenarioError, match=r"simulation\.seed: a value of type object cannot be written"):
        bh.from_dict({**QUEUE, "simulation": {**QUEUE["simulation"], "seed": object()}})


def test_none_leaves_a_key_out():
    same = {**QUEUE, "simulation": {**QUEUE["simulation"], "precision": None}}
    assert bh.from_dict(same).seed == 102


def test_toml_syntax_error_names_line_and_column():
    with pytest.raises(bh.ScenarioError, match=r"^mine\.toml:2:\d+: "):
        bh.loads("[simulation]\nlength = = 3\n", name="mine.toml")


def corpus():
    return sorted(p.name for p in BAD_SCENARIOS.glob("*.toml"))


@pytest.mark.parametrize("name", corpus())
def test_bad_scenario_corpus_gives_the_binarys_message(binary, name):
    # The binary's one-line message for each file of the corpus
    # (tests/robustness_corpus.rs), from `busyhour check` in the corpus
    # folder: the package must raise ScenarioError with the same text.
    _, stderr, status = run_binary(binary, "check", name, cwd=BAD_SCENARIOS)
    if status != 2:
        pytest.skip(f"the binary's check does not refuse {name} as a scenario (exit {status})")
    expected = stderr.strip()
    assert expected.startswith("busyhour: ")
    here = os.getcwd()
    os.chdir(BAD_SCENARIOS)
    try:
        with pytest.raises(bh.ScenarioError) as e:
            bh.load(name)
    finally:
        os.chdir(here)
    assert "busyhour: " + str(e.value) == expected
