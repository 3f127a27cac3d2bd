"""``sizing app`` leaves no process behind: SIGTERM or SIGINT to it alone ends the Streamlit server.

The signal goes to the ``sizing app`` process only (not its process group), as a service manager
or ``kill PID`` would send it; the server (its child) must exit and free the port.
"""

from __future__ import annotations

import os
import signal
import socket
import time
from pathlib import Path

import pytest

from tests.test_browser import free_port, start_app, stop_app

pytestmark = [pytest.mark.browser, pytest.mark.skipif(not Path("/proc").is_dir(), reason="needs /proc")]


def children(pid: int) -> list[int]:
    try:
        text = Path(f"/proc/{pid}/task/{pid}/children").read_text()
    except OSError:
        return []
    return [int(x) for x in text.split()]


def alive(pid: int) -> bool:
    try:
        status = Path(f"/proc/{pid}/status").read_text()
    except OSError:
        return False
    return "State:\tZ" not in status


def port_free(port: int) -> bool:
    with socket.socket() as s:
        s.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)  # as a server binds (TIME_WAIT is no owner)
        try:
            s.bind(("127.0.0.1", port))
        except OSError:
            return False
    return True


@pytest.mark.parametrize("sig", [signal.SIGTERM, signal.SIGINT], ids=["SIGTERM", "SIGINT"])
def test_signal_to_sizing_app_ends_the_server(sig, tmp_path):
    os.environ.setdefault("SIZING_WORKSPACES", str(tmp_path))
    port = free_port()
    proc = start_app(port)
    try:
        server = children(proc.pid)
        assert server, "sizing app runs the server as a child process"
        os.kill(proc.pid, sig)  # the parent only, not its group
        proc.wait(timeout=20)
        deadline = time.monotonic() + 20
        while time.monotonic() < deadline and (any(alive(p) for p in server) or not port_free(port)):
            time.sleep(0.1)  # polling while the server shuts down
        assert not any(alive(p) for p in server), "the Streamlit server outlived sizing app"
        assert port_free(port), f"port {port} still taken"
    finally:
        stop_app(proc)
