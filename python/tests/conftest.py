"""Shared fixtures: the repository's paths and the busyhour binary the
package's results are compared with."""

import os
import shutil
import subprocess
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
SCENARIOS = REPO / "scenarios"
GOLDEN_INPUTS = REPO / "tests" / "golden" / "inputs"
BAD_SCENARIOS = REPO / "tests" / "bad-scenarios"


def _find_binary():
    """BUSYHOUR_BIN, else the release build of this checkout."""
    given = os.environ.get("BUSYHOUR_BIN")
    if given:
        return given
    target = Path(os.environ.get("CARGO_TARGET_DIR", REPO / "target"))
    candidate = target / "release" / "busyhour"
    if candidate.exists():
        return str(candidate)
    return shutil.which("busyhour")


@pytest.fixture(scope="session")
def binary():
    """The busyhour binary; tests that compare with it are skipped without
    one, unless BUSYHOUR_REQUIRE_BIN=1 (CI), where its absence fails them."""
    path = _find_binary()
    if path is None:
        if os.environ.get("BUSYHOUR_REQUIRE_BIN") == "1":
            pytest.fail("BUSYHOUR_REQUIRE_BIN=1 but no busyhour binary: build it or set BUSYHOUR_BIN")
        pytest.skip("no busyhour binary (cargo build --release, or set BUSYHOUR_BIN)")
    return path


def run_binary(binary, *args, cwd=None):
    """The binary's stdout, stderr and exit status."""
    done = subprocess.run(
        [binary, *map(str, args)],
        capture_output=True,
        text=True,
        cwd=cwd,
        env={**os.environ, "SOURCE_DATE_EPOCH": "0"},
    )
    return done.stdout, done.stderr, done.returncode
