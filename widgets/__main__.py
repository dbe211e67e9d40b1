"""Serve the planner as a web app: ``python -m widgets [PROJECT] [--port N] [--open]``.

Voila runs ``example_notebooks/planner.ipynb`` and shows only its output, the planner, at
``http://127.0.0.1:PORT/``. Without a project file the bundled demo house is opened. The server
listens on 127.0.0.1 only; stop it with Ctrl+C.
"""

from __future__ import annotations

import argparse
import importlib.util
import os
import sys
from pathlib import Path

NOTEBOOK = Path(__file__).resolve().parents[1] / "example_notebooks" / "planner.ipynb"
DEFAULT_PORT = 8866


def voila_command(notebook: Path, *, port: int, open_browser: bool = False) -> list[str]:
    """Return the command line that serves ``notebook`` with Voila on 127.0.0.1:``port``."""
    command = [sys.executable, "-m", "voila", str(notebook), f"--port={port}",
               "--Voila.ip=127.0.0.1", "--Voila.port_retries=0", "--theme=light",
               "--VoilaConfiguration.show_tracebacks=True"]
    if not open_browser:
        command.append("--no-browser")
    return command


def voila_environment(environ=None) -> dict:
    """Return the environment the Voila server and its kernels run with.

    The caller's environment, with numpy's huge-page advice off unless the user chose
    (``NUMPY_MADVISE_HUGEPAGE``; see :mod:`layout.runtime` for why and what it measured).
    """
    env = dict(os.environ if environ is None else environ)
    env.setdefault("NUMPY_MADVISE_HUGEPAGE", "0")
    return env


def main(argv=None) -> int:
    """Parse the command line and replace this process with the Voila server."""
    parser = argparse.ArgumentParser(prog="python -m widgets",
                                     description="Serve the eaveline planner with Voila.")
    parser.add_argument("project", nargs="?", help="project file (default: the demo house)")
    parser.add_argument("--port", type=int, default=DEFAULT_PORT,
                        help=f"port on 127.0.0.1 (default {DEFAULT_PORT})")
    parser.add_argument("--open", action="store_true", help="open a browser tab")
    args = parser.parse_args(argv)
    if importlib.util.find_spec("voila") is None:
        print("python -m widgets: Voila is not installed; run `bash .ci/setup.sh` first.",
              file=sys.stderr)
        return 2
    if not NOTEBOOK.is_file():
        print(f"python -m widgets: the planner notebook is missing ({NOTEBOOK}); run from a "
              "checkout of eaveline.", file=sys.stderr)
        return 2
    env = voila_environment()
    if args.project:
        project = Path(args.project).expanduser().resolve()
        if not project.is_file():
            print(f"python -m widgets: no such project file: {project}", file=sys.stderr)
            return 2
        env["EAVELINE_PROJECT"] = str(project)
    print(f"eaveline planner: http://127.0.0.1:{args.port}/ (Ctrl+C stops it)", flush=True)
    command = voila_command(NOTEBOOK, port=args.port, open_browser=args.open)
    os.execve(sys.executable, command, env)
    return 0  # not reached


if __name__ == "__main__":
    sys.exit(main())
