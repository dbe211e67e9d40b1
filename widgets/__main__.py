"""Serve the planner as a web app: ``python -m widgets [PROJECT] [--port N] [--open] [--check]``.

Voila runs the planner notebook that ships inside this package (``widgets/app/planner.ipynb``,
found with :mod:`importlib.resources`, so an installed wheel serves it just as a checkout does)
and shows only its output, the planner, at ``http://127.0.0.1:PORT/``. Without a project file
the bundled demo house is opened. The server listens on 127.0.0.1 only; stop it with Ctrl+C.
Once eaveline is installed, ``eaveline-planner`` is the same command.

``--check`` starts no server: it finds the packaged notebook and its kernel, imports Voila, loads
the project and builds the :class:`~widgets.planner.Planner` once, then prints one line. Exit
status 0 when the planner can start, 1 when the project cannot be loaded or planned, 2 when
something the planner needs (Voila, the notebook, its kernel, the project file) is missing or
the command line is misused.
"""

from __future__ import annotations

import argparse
import importlib
import importlib.util
import json
import os
import sys
import warnings
from importlib import resources
from importlib.resources.abc import Traversable
from pathlib import Path

DEFAULT_PORT = 8866
#: The folder relative paths typed in the planner are taken from (see :func:`voila_environment`).
WORKDIR_VARIABLE = "EAVELINE_WORKDIR"
#: Where the planner notebook lies inside the ``widgets`` package (package data).
NOTEBOOK_PARTS = ("app", "planner.ipynb")


class StartError(Exception):
    """The planner cannot start; the message says why and what to do.

    Parameters
    ----------
    message : str
        What is missing or wrong, in plain words.
    status : int, optional
        Exit status for the command line: 2 (default) when something the planner needs is
        missing, 1 when the project cannot be loaded or planned.
    """

    def __init__(self, message: str, *, status: int = 2):
        super().__init__(message)
        self.status = status


def planner_notebook() -> Traversable:
    """Return the planner notebook shipped in the ``widgets`` package.

    Returns
    -------
    importlib.resources.abc.Traversable
        The packaged ``app/planner.ipynb``; use :func:`importlib.resources.as_file` for a path
        on disk (a plain :class:`pathlib.Path` for an installed or checked-out package).
    """
    notebook = resources.files("widgets")
    for part in NOTEBOOK_PARTS:
        notebook = notebook / part
    return notebook


def require_notebook(notebook: Path) -> Path:
    """Return ``notebook`` if it is a file; raise :class:`StartError` naming it otherwise.

    Parameters
    ----------
    notebook : pathlib.Path
        The planner notebook on disk (from :func:`planner_notebook`).

    Returns
    -------
    pathlib.Path
        ``notebook``, unchanged.
    """
    if not Path(notebook).is_file():
        raise StartError(f"the planner notebook is missing from the widgets package "
                         f"({notebook}); reinstall eaveline")
    return notebook


def require_voila(*, import_it: bool = False) -> str:
    """Check that Voila is installed; raise :class:`StartError` if it is not.

    Parameters
    ----------
    import_it : bool, optional
        Import Voila instead of only finding it (slower, but proves it imports).

    Returns
    -------
    str
        Voila's version when ``import_it``, else an empty string.
    """
    hint = "install eaveline with its dependencies (`bash .ci/setup.sh` in a checkout)"
    if importlib.util.find_spec("voila") is None:
        raise StartError(f"Voila is not installed; {hint}")
    if not import_it:
        return ""
    try:
        voila = importlib.import_module("voila")
    except ImportError as err:
        raise StartError(f"Voila does not import ({err}); {hint}") from None
    return str(getattr(voila, "__version__", "?"))


def require_kernel(notebook: Path) -> str:
    """Check that the Jupyter kernel the notebook names is installed; raise if it is not.

    Voila runs the notebook in that kernel (``python3``, from ipykernel); without it every page
    load fails with "No Jupyter kernel", so the command says so before it starts.

    Parameters
    ----------
    notebook : pathlib.Path
        The planner notebook on disk (from :func:`planner_notebook`).

    Returns
    -------
    str
        The kernel's display name, e.g. ``"Python 3 (ipykernel)"``.

    Raises
    ------
    StartError
        When the notebook cannot be read or its kernel is not installed.
    """
    from jupyter_client.kernelspec import KernelSpecManager, NoSuchKernel

    try:
        document = json.loads(Path(notebook).read_text(encoding="utf-8"))
        name = document["metadata"]["kernelspec"]["name"]
    except (OSError, ValueError, KeyError, TypeError) as err:
        raise StartError(f"the planner notebook cannot be read ({notebook}: "
                         f"{type(err).__name__}: {err}); reinstall eaveline") from None
    try:
        return KernelSpecManager().get_kernel_spec(name).display_name
    except NoSuchKernel:
        raise StartError(f"no Jupyter kernel {name!r} to run the planner in; install ipykernel "
                         "(a dependency of eaveline: reinstall eaveline)") from None


def project_file(path) -> Path:
    """Return the absolute path of a project file; raise :class:`StartError` if there is none.

    Parameters
    ----------
    path : str or pathlib.Path
        The project file as typed (``~`` and relative paths allowed).

    Returns
    -------
    pathlib.Path
        The resolved path of an existing file.
    """
    project = Path(path).expanduser().resolve()
    if not project.is_file():
        raise StartError(f"no such project file: {project}")
    return project


def startup_check(project=None) -> str:
    """Check that the planner can start, without starting a server.

    Finds the project file, imports Voila, finds the packaged notebook and the kernel it runs
    in, loads the project (the demo house without one) and builds the
    :class:`~widgets.planner.Planner` once, as the notebook does.

    Parameters
    ----------
    project : str or pathlib.Path, optional
        Project file to load; default the bundled demo project.

    Returns
    -------
    str
        One line saying what was checked: the notebook, Voila's version, the kernel, the
        project and its module count.

    Raises
    ------
    StartError
        When the notebook, its kernel, Voila or the project file is missing (``status`` 2), or
        when the project cannot be loaded or planned (``status`` 1; the message lists the
        problems).
    """
    from layout.errors import InputError
    from layout.project import ProjectFileError, load_demo_project, load_project

    path = project_file(project) if project is not None else None
    version = require_voila(import_it=True)
    with resources.as_file(planner_notebook()) as notebook:
        kernel = require_kernel(require_notebook(notebook))
        where = str(notebook)
    from .planner import Planner  # ipywidgets and bqplot, only once the rest is there

    try:
        loaded = load_project(path) if path else load_demo_project()
        with warnings.catch_warnings():  # bqplot's axes through traitlets: not ours to fix
            warnings.filterwarnings("ignore", category=DeprecationWarning, module="traitlets")
            planner = Planner(loaded, path=path)
    except (ProjectFileError, InputError, OSError) as err:
        raise StartError(f"the planner cannot open {path or 'the demo project'}:\n{err}",
                         status=1) from None
    return (f"planner OK: notebook {where}, Voila {version}, kernel {kernel}, project "
            f"{loaded.name!r} with {planner.array_layout.count} modules")


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

    The caller's environment, with numpy's huge-page advice off and ``malloc`` keeping freed
    arrays for reuse unless the user chose (``NUMPY_MADVISE_HUGEPAGE``, ``MALLOC_*_``; see
    :mod:`layout.runtime` for why and what it measured), and
    ``EAVELINE_WORKDIR`` set to the folder the command was started in (unless set already):
    Voila starts the kernel in the notebook's own folder, inside the installed package, and
    the planner notebook moves to this folder first, so that a relative path typed in the
    planner (a project to save, a survey CSV, an export) means what the user expects.
    """
    from layout.runtime import keep_freed_memory

    env = dict(os.environ if environ is None else environ)
    env.setdefault("NUMPY_MADVISE_HUGEPAGE", "0")
    keep_freed_memory(env)
    env.setdefault(WORKDIR_VARIABLE, os.getcwd())
    return env


def _program_name() -> str:
    """``python -m widgets`` when run so, else the console script's name (``eaveline-planner``)."""
    name = Path(sys.argv[0]).name if sys.argv and sys.argv[0] else ""
    return "python -m widgets" if name in ("", "__main__.py", "-c") else name


def serve(project=None, *, port: int = DEFAULT_PORT, open_browser: bool = False,
          new: bool = False) -> None:
    """Replace this process with the Voila server of the planner; return only on error.

    Parameters
    ----------
    project : str or pathlib.Path, optional
        Project file to open; default the bundled demo project.
    port : int, optional
        Port on 127.0.0.1.
    open_browser : bool, optional
        Open a browser tab.
    new : bool, optional
        Open the planner on a new, empty project: the Roof tab's New project form asks for
        the site first.

    Raises
    ------
    StartError
        When Voila, the notebook, its kernel or the project file is missing.
    """
    require_voila()
    env = voila_environment()
    if project is not None:
        env["EAVELINE_PROJECT"] = str(project_file(project))
    if new:
        env["EAVELINE_NEW"] = "1"
    # An installed or checked-out package is a folder, so as_file gives the file itself; from
    # a zip it would extract a copy, which outlives this process (exec never returns).
    with resources.as_file(planner_notebook()) as notebook:
        require_kernel(require_notebook(notebook))
        print(f"eaveline planner: http://127.0.0.1:{port}/ (Ctrl+C stops it)", flush=True)
        command = voila_command(notebook, port=port, open_browser=open_browser)
        os.execve(sys.executable, command, env)


def main(argv=None) -> int:
    """Parse the command line; serve the planner with Voila, or only check it (``--check``).

    Parameters
    ----------
    argv : list of str, optional
        Arguments after the program name; default ``sys.argv[1:]``.

    Returns
    -------
    int
        Exit status: 0 when the check passed (serving replaces this process and does not
        return), 1 when the project cannot be loaded or planned, 2 when something the planner
        needs is missing.
    """
    prog = _program_name() if argv is None else "python -m widgets"
    parser = argparse.ArgumentParser(prog=prog,
                                     description="Serve the eaveline planner with Voila.")
    parser.add_argument("project", nargs="?", help="project file (default: the demo house)")
    parser.add_argument("--port", type=int, default=DEFAULT_PORT,
                        help=f"port on 127.0.0.1 (default {DEFAULT_PORT})")
    parser.add_argument("--open", action="store_true", help="open a browser tab")
    parser.add_argument("--new", action="store_true",
                        help="start a new project: the planner opens on the New project form")
    parser.add_argument("--check", action="store_true",
                        help="start no server: check that the planner can start (notebook, "
                             "kernel, Voila, the project, the planner widget), print one line")
    args = parser.parse_args(argv)
    if args.new and args.project:
        parser.error("give a project file or --new, not both")
    try:
        if args.check:
            print(startup_check(args.project), flush=True)
            return 0
        serve(args.project, port=args.port, open_browser=args.open, new=args.new)
    except StartError as err:
        print(f"{prog}: {err}", file=sys.stderr)
        return err.status
    return 0  # not reached: serve replaced this process


if __name__ == "__main__":
    sys.exit(main())
