"""`trials app` as an operator runs it: it listens on this machine only unless told
otherwise, refuses the network without a passcode, and a signal to its process stops
the server and frees the port (issue 15, item 8)."""

from __future__ import annotations

import os
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _healthy(url: str, seconds: float) -> bool:
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        try:
            with urllib.request.urlopen(url + "/_stcore/health", timeout=2) as r:
                if r.status == 200:
                    return True
        except OSError:
            time.sleep(0.3)
    return False


def _trials(*args: str, env: dict[str, str]) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, "-m", "trials.cli", *args], env=env, cwd=ROOT,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)


def test_the_network_is_refused_without_a_passcode(tmp_path):
    env = {k: v for k, v in os.environ.items() if k != "TRIALS_PASSCODE"}
    proc = _trials("app", "--host", "0.0.0.0", "--db", f"sqlite:///{tmp_path / 'a.db'}",
                   env=env)
    out, err = proc.communicate(timeout=60)
    assert proc.returncode == 2
    assert b"no leader passcode is set" in err and out == b""


def test_a_signal_to_the_app_process_stops_the_server_and_frees_the_port(tmp_path):
    port = _free_port()
    env = {k: v for k, v in os.environ.items() if k != "TRIALS_PASSCODE"}
    env["CI"] = "1"  # headless
    proc = _trials("app", "--port", str(port), "--db", f"sqlite:///{tmp_path / 'a.db'}",
                   env=env)
    try:
        assert _healthy(f"http://127.0.0.1:{port}", 90)
        # listening on loopback only: the server is not bound to every interface
        if shutil.which("ss"):
            ss = subprocess.run(["ss", "-ltnH", f"sport = :{port}"], capture_output=True,
                                text=True, check=True)
            local = {line.split()[3] for line in ss.stdout.splitlines()}
            assert local == {f"127.0.0.1:{port}"}
        proc.send_signal(signal.SIGTERM)
        proc.wait(timeout=30)
    finally:
        if proc.poll() is None:
            proc.kill()
    with socket.socket() as s:  # the port is free again: no child still listens on it
        s.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)  # TIME_WAIT is no listener
        s.bind(("127.0.0.1", port))
