"""Settings shared by every test module."""

import contextlib
import os
import socket
import subprocess
import time
from pathlib import Path

import pytest
from hypothesis import settings

# Under CI the property tests draw the same examples on every run, so a red run can be
# reproduced; elsewhere hypothesis keeps exploring new ones.
settings.register_profile("ci", derandomize=True)
if os.environ.get("CI", "").lower() in ("1", "true", "yes"):
    settings.load_profile("ci")


@contextlib.contextmanager
def _local_server(make_command, *, log: Path, cwd, env=None, start_timeout_s: float = 30):
    """Run ``make_command(port)`` on a free port of 127.0.0.1; yield its URL; stop it all.

    Waits for a TCP connect (never a GET: a Voila page load starts a kernel) and fails the
    test with the server's log if it exits or does not listen in time. On the way out the
    server is terminated and whatever it started (kernels) is ended one by one.
    """
    import psutil

    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        port = sock.getsockname()[1]
    with open(log, "w") as stream:
        server = subprocess.Popen([str(c) for c in make_command(port)], env=env, cwd=cwd,
                                  stdout=stream, stderr=subprocess.STDOUT)
    try:
        deadline = time.monotonic() + start_timeout_s
        while True:
            try:
                socket.create_connection(("127.0.0.1", port), timeout=0.5).close()
                break
            except OSError:
                if server.poll() is not None or time.monotonic() > deadline:
                    pytest.fail(f"the server did not start; its log:\n{log.read_text()}")
                time.sleep(0.1)
        yield f"http://127.0.0.1:{port}/"
    finally:
        children = psutil.Process(server.pid).children(recursive=True)
        server.terminate()
        try:
            server.wait(timeout=15)
        except subprocess.TimeoutExpired:
            server.kill()
            server.wait(timeout=5)
        for child in children:  # kernels that outlive the server are ended one by one
            if child.is_running():
                child.kill()


@pytest.fixture(scope="session")
def local_server():
    """``with local_server(lambda port: command, log=PATH, cwd=DIR) as url:`` (see above)."""
    return _local_server
