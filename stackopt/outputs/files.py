"""Safe file writing for every output: atomic writes, the output folder's rules, and a
guard that nothing is written outside it.

An atomic write puts the bytes in a temporary file in the *same* folder, flushes and
fsyncs it, then ``os.replace``-s it onto the final name, so a reader (or an interrupted
run) sees either the old file or the complete new one, never half of one.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

from stackopt.errors import OutputError

__all__ = ["atomic_write_bytes", "atomic_write_text", "prepare_out_dir", "inside",
           "fsync_dir"]


def fsync_dir(folder: str | Path) -> None:
    """Flush a folder's entries to disk (where the platform allows it)."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:  # some file systems refuse fsync on folders; the data is still safe
        pass
    finally:
        os.close(fd)


def atomic_write_bytes(path: str | Path, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically (temp file in the same folder, fsync,
    ``os.replace``). Returns the path.

    Raises
    ------
    OutputError
        The folder does not exist or cannot be written.
    """
    p = Path(path)
    folder = p.parent if str(p.parent) else Path(".")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise OutputError(f"{folder}: cannot write here ({exc.strerror or exc}); "
                          "choose another --out") from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, p)
    except OSError as exc:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise OutputError(f"{p}: cannot write ({exc.strerror or exc}); "
                          "check the free space and permissions or choose another --out"
                          ) from None
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise
    fsync_dir(folder)
    return p


def atomic_write_text(path: str | Path, text: str) -> Path:
    """Write ``text`` as UTF-8 (line ends unchanged), atomically (see
    :func:`atomic_write_bytes`)."""
    return atomic_write_bytes(path, text.encode("utf-8"))


def inside(folder: str | Path, name: str | Path) -> Path:
    """``folder / name``, refusing any name that would land outside ``folder`` (absolute
    paths, ``..``, symlinks pointing out).

    Raises
    ------
    OutputError
        The resolved path is not inside the folder.
    """
    base = Path(folder).resolve()
    target = (base / name).resolve()
    if target == base or not target.is_relative_to(base):
        raise OutputError(f"refusing to write {name!s}: it is outside the output folder "
                          f"{base}")
    return target


def prepare_out_dir(path: str | Path, force: bool = False) -> Path:
    """Check that ``path`` can receive a result (creating nothing); see
    :func:`stackopt.outputs.resultdir.check_out_dir`."""
    from stackopt.outputs.resultdir import check_out_dir

    return check_out_dir(path, force)
