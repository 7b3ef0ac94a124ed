"""Shared test fixtures.

Services: ``scripts/test.sh`` starts a throwaway PostgreSQL server and exports its URL
as ``FLOATLIFT_TEST_PG_URL``. Tests that need a service call :func:`need_service`, which
skips when the service is absent, or fails when ``FLOATLIFT_REQUIRE_SERVICES=1`` (CI).
"""

from __future__ import annotations

import os
import signal
import subprocess
from pathlib import Path

import pytest

PROJECT_ROOT = Path(__file__).resolve().parent.parent
SHARED_DIR = PROJECT_ROOT.parent / "shared"
FOREIGN_GPX_DIR = SHARED_DIR / "foreign_gpx"
SAMPLE_TRACKS_DIR = PROJECT_ROOT / "sample_tracks"
ARTIFACTS_DIR = PROJECT_ROOT / "test-artifacts"


def need_service(available: bool, reason: str) -> None:
    """Skip (or, with FLOATLIFT_REQUIRE_SERVICES=1, fail) when a service is missing."""
    if available:
        return
    if os.environ.get("FLOATLIFT_REQUIRE_SERVICES") == "1":
        pytest.fail(f"required service missing: {reason}")
    pytest.skip(reason)


def stop_server(proc: subprocess.Popen, timeout_s: float = 30.0) -> int:
    """Stop a server process as Ctrl-C does; kill it if it has not ended within *timeout_s*.

    Returns the exit status (negative when it had to be killed).
    """
    if proc.poll() is None:
        proc.send_signal(signal.SIGINT)  # what Ctrl-C sends
        try:
            return proc.wait(timeout=timeout_s)
        except subprocess.TimeoutExpired:
            proc.kill()
    return proc.wait()


@pytest.fixture(scope="session")
def project_root() -> Path:
    return PROJECT_ROOT


@pytest.fixture(scope="session")
def foreign_gpx_dir() -> Path:
    if not FOREIGN_GPX_DIR.is_dir():
        pytest.skip(f"folder of GPX files from other software not present beside the project ({FOREIGN_GPX_DIR.name})")
    return FOREIGN_GPX_DIR


@pytest.fixture(scope="session")
def pg_url() -> str:
    """URL of the throwaway PostgreSQL server of this test run."""
    url = os.environ.get("FLOATLIFT_TEST_PG_URL", "")
    need_service(bool(url), "no PostgreSQL test server (run the suite through scripts/test.sh)")
    return url


@pytest.fixture(scope="session")
def artifacts_dir() -> Path:
    ARTIFACTS_DIR.mkdir(exist_ok=True)
    return ARTIFACTS_DIR
