"""Writing output files atomically (every layer writes through this one function).

Outputs are written atomically and inputs are never touched. A file is written to a
temporary file in the target's folder, flushed to disk, given the ordinary permissions (0666 less
the process umask, like a file opened for writing), and moved into place with ``os.replace``, so a
reader sees the old file or the whole new one, never a part. An existing file is replaced only with
``force``.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import os
import tempfile
from collections.abc import Callable
from pathlib import Path
from typing import BinaryIO

from .errors import LegbridgeError, OutputExistsError, OutputFolderError


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


FORCE_HINT = "pass --force to replace it"


def refuse_existing(path: str | Path, force: bool) -> Path:
    """Raise OutputExistsError when ``path`` exists and ``force`` is false; return it as a Path."""
    p = Path(path)
    if p.exists() and not force:
        raise OutputExistsError("output file exists", path=str(p), expected="a new file name", found=Described("an existing file"),
                                hint=FORCE_HINT)
    return p


def _same_file(a: Path, b: Path) -> bool:
    try:
        return a.resolve() == b.resolve() or (a.exists() and b.exists() and os.path.samefile(a, b))
    except OSError:
        return False


def with_referenced_files(inputs) -> list[Path]:
    """The input files and the files they name: a robot TOML's [urdf] file (resolved beside it), so
    that no output can replace it either. An input that cannot be read is left for its reader to
    report."""
    out = []
    for i in inputs:
        if i is None:
            continue
        p = Path(i)
        out.append(p)
        if p.suffix.lower() == ".toml" and p.is_file():
            import tomllib

            try:
                doc = tomllib.loads(p.read_text(encoding="utf-8"))
            except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError, RecursionError):
                continue
            urdf = doc.get("urdf") if isinstance(doc, dict) else None
            name = urdf.get("file") if isinstance(urdf, dict) else None
            if isinstance(name, str) and name:
                out.append(p.parent / name)
    return out


def check_outputs(outputs, *, inputs=(), force: bool = False) -> tuple[Path, ...]:
    """Refuse, before any work, output files that would fail or do harm: two outputs that are the
    same file, an output that is an input (whatever ``force`` says), an existing output without
    ``force`` (OutputExistsError), a missing folder (OutputFolderError). None entries are skipped."""
    outs = [Path(o) for o in outputs if o is not None]
    ins = with_referenced_files(inputs)
    for k, o in enumerate(outs):
        for other in outs[:k]:
            if _same_file(o, other):
                raise OutputExistsError("two outputs name the same file", path=str(o), expected="distinct output files",
                                        found=Described(f"{other} and {o}"))
        for i in ins:
            if _same_file(o, i):
                raise OutputExistsError("refusing to overwrite an input file", path=str(o),
                                        hint="choose another output name (--force never applies to inputs)")
        if o.is_dir():
            raise OutputFolderError("output path is a folder", path=str(o), expected="a file name", found=Described("a folder"))
        refuse_existing(o, force)
        folder = o.parent if str(o.parent) else Path(".")
        if not folder.is_dir():
            raise OutputFolderError("output folder does not exist", path=str(folder), hint="create it first")
        refuse_unwritable(folder)
    return tuple(outs)


def refuse_unwritable(folder: Path) -> None:
    """OutputFolderError unless files can be created in ``folder`` (checked before any work, so that a
    read-only destination is found before the computation, not after it)."""
    if not os.access(folder, os.W_OK | os.X_OK):
        raise OutputFolderError("cannot write in the output folder", path=str(folder),
                                expected="a folder this user may write in", found=Described("no write permission"),
                                hint="choose another folder or change its permissions")


def check_output_folder(out_dir: str | Path, names, *, inputs=(), force: bool = False) -> Path:
    """Refuse an output folder that is a file, that holds any of ``names`` (unless ``force``), or where
    one of ``names`` would replace an input file (whatever ``force`` says). The folder may not exist yet."""
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise OutputFolderError(path=str(out), expected="a folder for the outputs", found=Described("a file"))
    for n in names:
        for i in with_referenced_files(inputs):
            if i is not None and _same_file(out / n, Path(i)):
                raise OutputExistsError("refusing to overwrite an input file", path=str(out / n),
                                        hint="choose another output folder (--force never applies to inputs)")
    if out.is_dir() and not force:
        present = [n for n in names if (out / n).exists()]
        if present:
            raise OutputExistsError("previous outputs in the folder", path=str(out), expected="a folder without them",
                                    found=Described(", ".join(present)), hint=FORCE_HINT)
    # the folder, or the nearest existing folder above it (where it will be created), must be writable
    probe = out if out.is_dir() else next((p for p in out.absolute().parents if p.is_dir()), Path("."))
    refuse_unwritable(probe)
    return out


def write_atomic(path: str | Path, data: bytes | str | Callable[[BinaryIO], None], *, force: bool = False) -> Path:
    """Write ``data`` (bytes, text as UTF-8, or a function that writes to a binary file) to ``path``.

    Raises OutputExistsError when ``path`` exists and ``force`` is false, LegbridgeError when the
    folder does not exist or is not a folder. Returns the path written.
    """
    p = refuse_existing(path, force)
    folder = p.parent if str(p.parent) else Path(".")
    if not folder.is_dir():
        raise OutputFolderError("output folder does not exist", path=str(folder), hint="create it first")
    if p.is_dir():
        raise OutputFolderError("output path is a folder", path=str(p), expected="a file name", found=Described("a folder"))
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


def json_ready(obj):
    """Python / NumPy values -> JSON values: arrays to lists, NumPy scalars to Python, enums to their
    value, and every number that is not finite to None (JSON has no NaN or infinity)."""
    import enum
    import math

    import numpy as np

    if isinstance(obj, dict):
        return {str(k.value if isinstance(k, enum.Enum) else k): json_ready(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_ready(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return json_ready(obj.tolist())
    if isinstance(obj, enum.Enum):
        return json_ready(obj.value)
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        x = float(obj)
        return x if math.isfinite(x) else None
    return obj


def json_text(doc) -> str:
    """``doc`` as indented JSON text with a final newline (non-finite numbers already None)."""
    import json

    return json.dumps(json_ready(doc), indent=2, allow_nan=False) + "\n"


def write_json(doc, path: str | Path, *, force: bool = False) -> Path:
    """Write ``doc`` as JSON atomically (write_atomic); OutputExistsError when it exists without ``force``."""
    return write_atomic(path, json_text(doc), force=force)
