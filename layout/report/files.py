"""Writing a report file: the format from the extension, checked before any work, written whole.

The file is written to a temporary name in the target's folder and then renamed over the
target in one step, so a failure never leaves a partial report behind.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from ..errors import InputError

__all__ = ["FORMATS", "check_output", "write_bytes_atomic"]

#: Report formats by file extension.
FORMATS = {".pdf": "pdf", ".html": "html", ".htm": "html"}


def check_output(path) -> tuple[Path, str]:
    """Check a report path before any work: a known extension and a writable folder.

    Parameters
    ----------
    path : str or os.PathLike
        Where the report goes: ``.pdf``, ``.html`` or ``.htm``.

    Returns
    -------
    (pathlib.Path, str)
        The path and the format (``"pdf"`` or ``"html"``).

    Raises
    ------
    InputError
        Naming the output path: an unknown extension, a missing folder, a folder in the way,
        or a folder this user cannot write to.
    """
    target = Path(os.fspath(path)).expanduser()
    kind = FORMATS.get(target.suffix.lower())
    if kind is None:
        raise InputError("output", "has an unknown extension", value=os.fspath(path),
                         allowed=", ".join(FORMATS))
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise InputError("output", "is in a folder that does not exist",
                         value=os.fspath(path), allowed="a path in an existing folder")
    if target.is_dir():
        raise InputError("output", "is a folder, not a file", value=os.fspath(path))
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InputError("output", "is in a folder this user cannot write to",
                         value=os.fspath(path), allowed="a path in a writable folder")
    return target, kind


def write_bytes_atomic(data: bytes, path) -> Path:
    """Write ``data`` to ``path`` through a temporary file in the same folder; return the path."""
    target = Path(path)
    handle, temp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp",
                                         dir=target.parent)
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(data)
            stream.flush()
            os.fsync(stream.fileno())
        os.chmod(temp_name, 0o644)
        os.replace(temp_name, target)
    except BaseException:
        Path(temp_name).unlink(missing_ok=True)
        raise
    return target
