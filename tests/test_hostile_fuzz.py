"""Short runs of the fuzzing harness (benchmarks/fuzz_inputs.py) over every parser of
outside data: each generated input is accepted or refused with the parser's own one-line
error, quickly, without numerical warnings. The long runs are
``.venv/bin/python benchmarks/fuzz_inputs.py --examples 2000``.
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import pytest

HARNESS = Path(__file__).resolve().parent.parent / "benchmarks" / "fuzz_inputs.py"
EXAMPLES = 40
SEED = 7


@pytest.fixture(scope="module")
def fuzz():
    spec = importlib.util.spec_from_file_location("fuzz_inputs", HARNESS)
    module = importlib.util.module_from_spec(spec)
    sys.modules["fuzz_inputs"] = module  # dataclasses look their module up there
    spec.loader.exec_module(module)
    return module


TARGETS = ["gpx_mutations", "gpx_fields", "dimensions", "volume", "mass", "outline_csv", "manifest", "zip_names",
           "conditions", "analysis"]


@pytest.mark.timeout(240)
@pytest.mark.parametrize("name", TARGETS)
def test_short_fuzz_run(fuzz, name, tmp_path):
    targets = fuzz.targets(tmp_path)
    assert sorted(targets) == sorted(TARGETS)  # every target of the harness is run here
    strategy, check = targets[name]
    n = max(8, int(EXAMPLES * fuzz.SLOW_TARGETS.get(name, 1.0) * 2))
    fuzz.TALLIES.pop(name, None)
    fuzz.run_target(name, strategy, check, n, SEED)
    tally = fuzz.TALLIES[name]
    assert tally.accepted + tally.refused >= min(n, 8)


def test_harness_reports_a_crash_and_a_stray_warning(fuzz):
    """The harness itself can fail: an unexpected exception or warning is not a refusal."""
    from hypothesis import strategies as st

    from sessions.errors import BoardSpecError

    def crashes(text):
        with fuzz.expect("selftest", BoardSpecError):
            raise KeyError(text)

    with pytest.raises(KeyError):
        fuzz.run_target("selftest", st.text(max_size=3), crashes, 5, SEED)

    def warns(text):
        import warnings

        with fuzz.expect("selftest", BoardSpecError):
            warnings.warn("overflow", RuntimeWarning, stacklevel=1)

    with pytest.raises(AssertionError, match="unexpected warning"):
        fuzz.run_target("selftest", st.text(max_size=3), warns, 5, SEED)

    def two_lines(text):
        with fuzz.expect("selftest", BoardSpecError):
            raise BoardSpecError("first line\nsecond line")

    with pytest.raises(AssertionError, match="one-line"):
        fuzz.run_target("selftest", st.text(max_size=3), two_lines, 5, SEED)
