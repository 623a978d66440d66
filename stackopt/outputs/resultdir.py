"""A result is one directory tree, written all or nothing.

Every output of a run goes through :func:`write_result` as ``{relative path: bytes}``
(sub-folders allowed: ``stackups/s1.yaml``, ``comparison/fab-a/summary.json``). The tree
is written and fsynced in a *staging* folder beside ``--out`` (same file system), with a
manifest of what stackopt wrote (:data:`MANIFEST`). Files in ``--out`` that stackopt did
not write are carried into the staging folder as hard links (same inode: not copied, not
changed). Then the staging folder and ``--out`` are exchanged in one atomic step
(Linux ``renameat2(RENAME_EXCHANGE)``), and the old tree is removed. Where the exchange
is not available, two renames are used with SIGINT/SIGTERM/SIGHUP deferred across them,
and a run that was killed between them (``kill -9``, power loss) is repaired by the next
run before it starts.

So at every instant ``--out`` holds the complete previous result or the complete new
one; an interrupt before the exchange removes the staging folder and leaves ``--out`` as
it was; a stackopt result replaces the previous one as a whole (no stale files).

Test hook: with ``STACKOPT_TEST_PAUSE=phase[:seconds]`` in the environment, the run
writes ``stackopt-test: paused at <phase>`` to stderr and sleeps at that phase
(``search``, ``staging``, ``swap``), so tests can interrupt it there deterministically.
``STACKOPT_TEST_NO_EXCHANGE=1`` forces the two-rename path.
"""

from __future__ import annotations

import contextlib
import ctypes
import errno
import hashlib
import json
import os
import shutil
import signal
import tempfile
import time
from collections.abc import Iterator, Mapping
from pathlib import Path, PurePosixPath

from stackopt.errors import OutputError

__all__ = ["MANIFEST", "write_result", "check_out_dir", "pause_point", "signals_held"]

#: The manifest file stackopt keeps in every result folder: what it wrote.
MANIFEST = ".stackopt-manifest.json"
#: Names written by stackopt before the manifest existed (treated as its own on --force).
LEGACY = frozenset({"summary.json", "candidates.csv", "front.csv", "report.html",
                    "report.md", "pareto.png", "pareto.svg", "response.png", "stackups.png",
                    "costs.png", "prepregs.png", "mitigations.png", "mitigations.csv",
                    "selected.yaml", "selected.s2p"})
_HELD = tuple(getattr(signal, n) for n in ("SIGINT", "SIGTERM", "SIGHUP") if hasattr(signal, n))
_MAX_NAME = 255
_MAX_PATH = 4000


def pause_point(phase: str) -> None:
    """Test hook: pause at ``phase`` when ``STACKOPT_TEST_PAUSE`` names it (see module)."""
    want = os.environ.get("STACKOPT_TEST_PAUSE", "")
    name, _, secs = want.partition(":")
    if name != phase:
        return
    os.write(2, f"stackopt-test: paused at {phase}\n".encode())
    end = time.monotonic() + float(secs or 30)
    while (left := end - time.monotonic()) > 0:
        time.sleep(min(left, 0.05))


@contextlib.contextmanager
def signals_held() -> Iterator[None]:
    """Defer SIGINT/SIGTERM/SIGHUP for the block: a signal that comes meanwhile is only
    recorded, and handled as it would have been (its handler, or the default action)
    when the block ends. Python runs signal handlers in the main thread only, so this
    holds there; elsewhere the block runs unprotected."""
    import threading

    if threading.current_thread() is not threading.main_thread():
        yield
        return
    got: list[int] = []
    old = {s: signal.signal(s, lambda signum, frame: got.append(signum)) for s in _HELD}
    try:
        yield
    finally:
        for s, h in old.items():
            signal.signal(s, h)
        for s in dict.fromkeys(got):
            h = old[s]
            if callable(h):
                h(s, None)
            elif h == signal.SIG_DFL:
                signal.raise_signal(s)


def _key(out: Path) -> str:
    """Prefix of the hidden siblings of ``out`` (staging and old trees): short and unique
    per folder name, so a long ``--out`` still gives legal names."""
    digest = hashlib.sha256(out.name.encode("utf-8", "surrogateescape")).hexdigest()[:10]
    return f".{out.name[:40]}-{digest}.stackopt-"


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:
        return True
    return True


def _recover(out: Path) -> None:
    """Undo what a killed run left beside ``out``: put back an old tree that was moved
    away (two-rename path) and remove staging folders of processes that are gone."""
    parent = out.parent
    if not parent.is_dir():
        return
    prefix = _key(out)
    for entry in sorted(parent.iterdir()):
        if not entry.name.startswith(prefix):
            continue
        kind, _, rest = entry.name[len(prefix):].partition("-")
        pid = int(rest.split("-")[0]) if rest.split("-")[0].isdigit() else 0
        if _alive(pid):
            continue
        if kind == "old" and not out.exists():
            with contextlib.suppress(OSError):
                os.rename(entry, out)
                continue
        if kind in ("old", "staging"):
            shutil.rmtree(entry, ignore_errors=True)


def check_out_dir(path: str | Path, force: bool = False) -> Path:
    """Check that ``path`` can receive a result, creating nothing; return it absolute.

    Raises
    ------
    OutputError
        Empty or over-long path, a control character in it, a file in the way, a
        non-empty folder without ``force``, or no writable folder to create it in.
    """
    text = os.fspath(path)
    if not text.strip():
        raise OutputError("--out is empty; name an output folder, e.g. --out results/")
    shown = ascii(text)[1:-1]
    if len(shown) > 120:
        shown = shown[:117] + "..."
    if any(ord(c) < 32 or ord(c) == 127 for c in text):
        raise OutputError(f"--out '{shown}' contains a control character (a newline or tab); "
                          "choose a plain folder name")
    p = Path(os.path.abspath(text))
    longest = max((len(s.encode("utf-8", "surrogateescape")) for s in p.parts), default=0)
    if longest > _MAX_NAME or len(text.encode("utf-8", "surrogateescape")) > _MAX_PATH:
        raise OutputError(f"--out '{shown}' is too long (a folder name is at most "
                          f"{_MAX_NAME} bytes); choose a shorter name")
    if p.parent == p:
        raise OutputError(f"--out {p} is the root folder; choose a folder inside it")
    here = Path.cwd().resolve()
    if here == p.resolve() or p.resolve() in here.parents:
        raise OutputError(f"--out {shown} is the current folder or holds it; a result "
                          "replaces its folder as a whole: choose a sub-folder, e.g. "
                          "--out results")
    p = p.parent.resolve() / p.name if p.parent.exists() else p
    if p.is_symlink() and p.resolve().is_dir():
        p = p.resolve()
    _recover(p)
    if p.exists() and not p.is_dir():
        raise OutputError(f"{p}: exists and is not a folder; choose another --out")
    if p.is_dir():
        try:
            non_empty = any(p.iterdir())
        except OSError as exc:
            raise OutputError(f"{p}: cannot read the output folder ({exc.strerror or exc}); "
                              "choose another --out") from None
        if non_empty and not force:
            raise OutputError(f"{p}: output folder is not empty; use --force to replace "
                              "the earlier stackopt result or choose another --out")
        if non_empty:
            _refuse_foreign_tree(p)
    base = p.parent
    while not base.exists():
        base = base.parent
    if not base.is_dir() or not os.access(base, os.W_OK | os.X_OK):
        raise OutputError(f"{p}: cannot create the output folder here ({base} is not a "
                          "writable folder); choose another --out")
    return p


#: Most entries stackopt did not write that a --force run carries over (hard links):
#: more means --out names a working folder, not a results folder.
MAX_FOREIGN = 500


def _refuse_foreign_tree(out: Path) -> None:
    """Refuse to replace a folder that holds a large tree stackopt did not write (a
    project or home folder given as --out by mistake)."""
    known = _manifest(out)
    ours = known[0] if known is not None else set(LEGACY)
    count = 0
    for _root, dirs, names in os.walk(out):
        count += len(dirs) + len(names)
        if count > MAX_FOREIGN + len(ours):
            raise OutputError(f"{out}: holds more than {MAX_FOREIGN} files stackopt did not "
                              "write; a result replaces its folder as a whole: choose a "
                              "folder for the results alone")


def _check_names(files: Mapping[str, bytes]) -> None:
    for name in files:
        pp = PurePosixPath(name)
        if (not name or pp.is_absolute() or any(s in ("", ".", "..") for s in name.split("/"))
                or name == MANIFEST or "\\" in name):
            raise OutputError(f"refusing to write {name!r}: not a plain path inside the "
                              "output folder")


def _manifest(out: Path) -> tuple[set[str], set[str]] | None:
    """(files, folders) stackopt wrote into ``out`` last time, or None if no manifest."""
    try:
        data = json.loads((out / MANIFEST).read_text(encoding="utf-8"))
        return set(data["files"]), set(data["folders"])
    except (OSError, ValueError, KeyError, TypeError):
        return None


def _write_tree(stage: Path, files: Mapping[str, bytes]) -> set[str]:
    folders: set[str] = set()
    half = len(files) // 2
    for k, (name, data) in enumerate(files.items()):
        if k == half:
            pause_point("staging")
        target = stage.joinpath(*name.split("/"))
        for parent in PurePosixPath(name).parents:
            if str(parent) != ".":
                folders.add(str(parent))
        target.parent.mkdir(parents=True, exist_ok=True)
        with open(target, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
    manifest = {"written_by": "stackopt", "files": sorted(files), "folders": sorted(folders)}
    with open(stage / MANIFEST, "w", encoding="utf-8") as fh:
        json.dump(manifest, fh, indent=1)
        fh.write("\n")
        fh.flush()
        os.fsync(fh.fileno())
    return folders


def _link_or_copy(src: Path, dst: Path) -> None:
    if src.is_symlink():
        os.symlink(os.readlink(src), dst)
        return
    if src.is_dir():
        dst.mkdir()
        for child in src.iterdir():
            _link_or_copy(child, dst / child.name)
        shutil.copystat(src, dst)
        return
    try:
        os.link(src, dst, follow_symlinks=False)
    except OSError:
        shutil.copy2(src, dst, follow_symlinks=False)


def _carry_foreign(out: Path, stage: Path, files: Mapping[str, bytes],
                   folders: set[str]) -> None:
    """Hard-link into ``stage`` every entry of ``out`` stackopt did not write."""
    known = _manifest(out)
    ours_files, ours_dirs = known if known is not None else (set(LEGACY), set())

    def walk(rel: PurePosixPath) -> None:
        for child in sorted((out / rel).iterdir()):
            r = rel / child.name
            name = str(r)
            if name == MANIFEST or name in ours_files or name in files:
                continue
            if child.name.startswith(".stackopt-staging-") and rel == PurePosixPath("."):
                continue  # left by an older version
            if child.is_dir() and not child.is_symlink() and (name in ours_dirs
                                                               or name in folders):
                (stage / r).mkdir(exist_ok=True)
                walk(r)
                continue
            if (stage / r).exists() or (stage / r).is_symlink():
                continue  # a new result path wins over a stale one of another kind
            _link_or_copy(child, stage / r)

    walk(PurePosixPath("."))


def _exchange(a: Path, b: Path) -> bool:
    """Atomically swap two paths (Linux ``renameat2(RENAME_EXCHANGE)``); False if this
    platform or file system cannot."""
    if os.environ.get("STACKOPT_TEST_NO_EXCHANGE"):
        return False
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError):
        return False
    at_fdcwd, rename_exchange = -100, 2
    rc = fn(at_fdcwd, os.fsencode(a), at_fdcwd, os.fsencode(b), rename_exchange)
    if rc == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.EINVAL, errno.ENOSYS, errno.EOPNOTSUPP):
        return False
    raise OSError(err, os.strerror(err), str(a))


def _swap(out: Path, stage: Path) -> Path | None:
    """Put ``stage`` at ``out``; return where the previous tree now is (to remove)."""
    if not out.exists():
        os.rename(stage, out)
        return None
    if _exchange(stage, out):
        return stage
    old = out.parent / (_key(out) + f"old-{os.getpid()}-{stage.name[-8:]}")
    os.rename(out, old)
    pause_point("swap-between")
    os.rename(stage, out)
    return old


def write_result(out_dir: str | Path, files: Mapping[str, bytes],
                 force: bool = False) -> list[Path]:
    """Write ``files`` (relative POSIX path -> bytes) as the complete result in
    ``out_dir``, all or nothing (see the module docstring).

    Returns
    -------
    list of Path
        The files written, in the order of ``files``.

    Raises
    ------
    OutputError
        The folder cannot receive the result (see :func:`check_out_dir`) or writing
        failed; ``out_dir`` is then as it was. An interrupt (``KeyboardInterrupt`` or
        the CLI's ``Interrupted``) propagates with the attribute ``committed`` set to
        whether the new result was already complete in ``out_dir``.
    """
    _check_names(files)
    out = check_out_dir(out_dir, force)
    stage: Path | None = None
    committed = False
    try:
        try:
            out.parent.mkdir(parents=True, exist_ok=True)
            stage = Path(tempfile.mkdtemp(prefix=_key(out) + f"staging-{os.getpid()}-",
                                          dir=out.parent))
            mode = out.stat().st_mode if out.is_dir() else 0o777 & ~_umask()
            os.chmod(stage, mode & 0o7777)
            folders = _write_tree(stage, files)
            if out.is_dir():
                _carry_foreign(out, stage, files, folders)
            from stackopt.outputs.files import fsync_dir

            fsync_dir(stage)
            with signals_held():
                pause_point("swap")
                old = _swap(out, stage)
                committed = True
                stage = old
                fsync_dir(out.parent)
                if old is not None:
                    shutil.rmtree(old, ignore_errors=True)
                stage = None
        except OSError as exc:
            if committed:
                return [out.joinpath(*n.split("/")) for n in files]
            raise OutputError(f"{out}: writing the result failed ({exc.strerror or exc}); "
                              "the folder is as it was; check the free space and "
                              "permissions or choose another --out") from None
    except BaseException as exc:
        with contextlib.suppress(AttributeError, TypeError):
            exc.committed = committed  # type: ignore[attr-defined]
            if getattr(exc, "out", "") is None:
                exc.out = out  # type: ignore[attr-defined]
        raise
    finally:
        if stage is not None:
            with signals_held():
                shutil.rmtree(stage, ignore_errors=True)
    return [out.joinpath(*n.split("/")) for n in files]


def _umask() -> int:
    mask = os.umask(0o22)
    os.umask(mask)
    return mask
