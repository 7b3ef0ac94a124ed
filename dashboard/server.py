"""Starting the dashboard: the Streamlit server as a child process bound to one address.

:func:`serve` checks the library and the address, starts ``python -m streamlit run
dashboard/app.py`` with the database URL in ``$FLOATLIFT_DB``, prints the address once
the server answers and keeps serving until Ctrl-C (or the server stops). No browser is
opened and no usage statistics are sent.
"""

from __future__ import annotations

import ipaddress
import os
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

from dashboard import palette
from sessions.errors import DashboardError

APP_PATH = Path(__file__).resolve().parent / "app.py"
DEFAULT_HOST = "127.0.0.1"
DEFAULT_PORT = 8520
#: Largest upload the server accepts [MB]; the import page checks the same limit itself.
MAX_UPLOAD_MB = 50
#: How long the server may take to stop after Ctrl-C before it is killed [s].
STOP_TIMEOUT_S = 5.0
#: How long to wait for the server's health check after starting it [s].
START_TIMEOUT_S = 60.0
ENV_DB = "FLOATLIFT_DB"


def streamlit_command(host: str, port: int) -> list[str]:
    """The command line that runs the app (headless, one address, our theme)."""
    return [
        sys.executable, "-m", "streamlit", "run", str(APP_PATH),
        "--server.headless", "true",
        "--server.address", host,
        "--server.port", str(port),
        "--server.maxUploadSize", str(MAX_UPLOAD_MB),
        "--server.fileWatcherType", "none",
        "--server.runOnSave", "false",
        "--browser.gatherUsageStats", "false",
        "--global.developmentMode", "false",
        "--client.toolbarMode", "minimal",
        "--theme.base", "light",
        "--theme.primaryColor", palette.ACCENT,
        "--theme.backgroundColor", palette.BACKGROUND,
        "--theme.secondaryBackgroundColor", palette.PANEL,
        "--theme.textColor", palette.INK,
    ]


def check_host(host: str) -> str:
    """A literal IP address to bind to (names are refused: they may resolve anywhere)."""
    try:
        return str(ipaddress.ip_address(host.strip()))
    except ValueError:
        if host.strip() == "localhost":
            return DEFAULT_HOST
        raise DashboardError(f"--host {host!r} is not an IP address (use 127.0.0.1, or 0.0.0.0 for every "
                             "interface)") from None


def port_free(host: str, port: int) -> bool:
    family = socket.AF_INET6 if ":" in host else socket.AF_INET
    with socket.socket(family, socket.SOCK_STREAM) as s:
        try:
            s.bind((host, port))
        except OSError:
            return False
    return True


def free_port(host: str = DEFAULT_HOST) -> int:
    """A port the system reports free on *host* now."""
    family = socket.AF_INET6 if ":" in host else socket.AF_INET
    with socket.socket(family, socket.SOCK_STREAM) as s:
        s.bind((host, 0))
        return int(s.getsockname()[1])


def address(host: str, port: int) -> str:
    shown = "127.0.0.1" if host in ("0.0.0.0", "::") else host
    if ":" in shown:
        shown = f"[{shown}]"
    return f"http://{shown}:{port}"


def wait_healthy(url: str, proc: subprocess.Popen | None = None, timeout_s: float = START_TIMEOUT_S) -> bool:
    """Poll ``/_stcore/health`` until it answers 200; False on timeout or if *proc* ended."""
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if proc is not None and proc.poll() is not None:
            return False
        try:
            with urllib.request.urlopen(f"{url}/_stcore/health", timeout=2) as resp:
                if resp.status == 200:
                    return True
        except (urllib.error.URLError, OSError):
            pass
        time.sleep(0.25)
    return False


def _stop_on_signals() -> None:
    """Treat SIGTERM like Ctrl-C (stop the server, then return), when called from the main thread.

    Ctrl-C works even when the process was started with SIGINT ignored (a shell without
    job control starts background commands that way, and Python then never raises
    KeyboardInterrupt): the server says "Ctrl-C to stop", so it must.
    """
    import signal
    import threading

    def _interrupt(signum, frame):  # noqa: ARG001
        raise KeyboardInterrupt

    if threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGTERM, _interrupt)
        if signal.getsignal(signal.SIGINT) is signal.SIG_IGN:
            signal.signal(signal.SIGINT, signal.default_int_handler)


def serve(url: str | None = None, *, host: str = DEFAULT_HOST, port: int | None = None,
          out=None) -> int:
    """Run the dashboard on *url*'s library until interrupted; returns an exit status.

    Parameters
    ----------
    url : str, optional
        Library URL (default ``$FLOATLIFT_DB`` or the embedded library file).
    host : str
        IP address to bind (default 127.0.0.1: only this machine).
    port : int, optional
        TCP port. Without it, :data:`DEFAULT_PORT`, or a free port when that one is taken.

    Raises
    ------
    DashboardError
        The address is not usable or the server did not start.
    StoreError
        The library cannot be opened.
    """
    from sessions.store import Library, mask_url, resolve_url

    out = out or sys.stdout
    host = check_host(host)
    url = resolve_url(url)
    with Library.open(url):  # fails early with a clear message; creates or upgrades the schema
        pass
    if port is None:
        port = DEFAULT_PORT if port_free(host, DEFAULT_PORT) else free_port(host)
    elif not 1 <= int(port) <= 65535:
        raise DashboardError(f"--port {port} is outside 1-65535")
    elif not port_free(host, int(port)):
        raise DashboardError(f"port {port} on {host} is in use (choose another with --port)")
    if not APP_PATH.is_file():
        raise DashboardError("the dashboard app is missing from this installation")
    env = dict(os.environ, **{ENV_DB: url})
    env.setdefault("STREAMLIT_BROWSER_GATHER_USAGE_STATS", "false")
    _stop_on_signals()
    proc = subprocess.Popen(streamlit_command(host, int(port)), env=env, stdin=subprocess.DEVNULL,
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    link = address(host, int(port))
    try:
        if not wait_healthy(link, proc):
            proc.terminate()
            try:
                _, err = proc.communicate(timeout=10)
            except subprocess.TimeoutExpired:
                proc.kill()
                _, err = proc.communicate()
            last = (err or "").strip().splitlines()[-1:] or ["no answer"]
            raise DashboardError(f"the dashboard did not start: {last[0]}")
        print(f"floatlift dashboard: {link}  (library {mask_url(url)}; Ctrl-C to stop)", file=out, flush=True)
        if host not in ("127.0.0.1", "::1"):
            print("floatlift dashboard: note: reachable from other machines on this network; "
                  "there is no login", file=out, flush=True)
        # drain stderr so the server never blocks on a full pipe
        for _line in proc.stderr:
            pass
        return 0 if proc.wait() in (0, -2, 130) else 1
    except KeyboardInterrupt:
        print("floatlift dashboard: stopped", file=out, flush=True)
        return 0
    finally:
        if proc.poll() is None:
            proc.terminate()
            try:
                proc.wait(timeout=STOP_TIMEOUT_S)
            except subprocess.TimeoutExpired:
                proc.kill()
                proc.wait()
