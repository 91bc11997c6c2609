"""Writing output files atomically (every layer writes through this one function).

DESIGN: outputs are written atomically and inputs are never touched. A file is written to a
temporary file in the target's folder, flushed to disk, given the ordinary permissions (0666 less
the process umask, like a file opened for writing), and moved into place with ``os.replace``, so a
reader sees the old file or the whole new one, never a part. An existing file is replaced only with
``force``.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Callable
from pathlib import Path
from typing import BinaryIO

from .errors import LegbridgeError, OutputExistsError


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def refuse_existing(path: str | Path, force: bool) -> Path:
    """Raise OutputExistsError when ``path`` exists and ``force`` is false; return it as a Path."""
    p = Path(path)
    if p.exists() and not force:
        raise OutputExistsError("output file exists", path=str(p), expected="a new file name", found="an existing file",
                                hint="pass --force (force=True) to overwrite it")
    return p


def write_atomic(path: str | Path, data: bytes | str | Callable[[BinaryIO], None], *, force: bool = False) -> Path:
    """Write ``data`` (bytes, text as UTF-8, or a function that writes to a binary file) to ``path``.

    Raises OutputExistsError when ``path`` exists and ``force`` is false, LegbridgeError when the
    folder does not exist or is not a folder. Returns the path written.
    """
    p = refuse_existing(path, force)
    folder = p.parent if str(p.parent) else Path(".")
    if not folder.is_dir():
        raise LegbridgeError("output folder does not exist", path=str(folder), hint="create it first")
    if p.is_dir():
        raise LegbridgeError("output path is a folder", path=str(p), expected="a file name", found="a folder")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise LegbridgeError(f"cannot write in this folder ({exc.strerror})", path=str(folder)) from exc
    try:
        with os.fdopen(fd, "wb") as fh:
            if callable(data):
                data(fh)
            else:
                fh.write(data.encode("utf-8") if isinstance(data, str) else data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, p)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        if isinstance(exc, OSError):
            raise LegbridgeError(f"could not write the file ({exc.strerror or exc})", path=str(p)) from exc
        raise
    return p
