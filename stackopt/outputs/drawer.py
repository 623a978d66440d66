"""A process that gets ready to draw while this one searches.

The search runs on one core; the drawing libraries (matplotlib) and the field solver
(scipy's sparse LU) take about 0.4 s to import, and the other core is idle meanwhile. A
:class:`Drawer` is forked before the search: it imports what drawing needs (``warm``)
while the search runs, then waits for tasks (a module-level function and its
arguments) and returns each task's value, while this process does its own share: the
picks' field solves while this process runs the analyses, then the drawing (the search
result pickled once: some megabytes, a few hundredths of a second). The figures it
draws are the same bytes as drawn here: the result arrives bit for bit, and every
figure reads only the result (``tests/test_outputs_parallel.py``).

Nothing is started where :func:`stackopt.outputs.parallel.workers` allows only one
process (no ``fork``, one core, or ``STACKOPT_JOBS=1``); callers then do the work
themselves. The process never prints. It runs in a process group of its own (with the
workers it forks to draw on every core), ignores Ctrl-C (this process handles it), ends
when its pipe closes, and is ended with its workers when this process stops waiting for
it: an interrupted or failed run leaves nothing behind.
"""

from __future__ import annotations

import io
import multiprocessing
import os
import pickle
import signal
import threading
from collections.abc import Callable
from multiprocessing.connection import Connection
from typing import Any

from stackopt.outputs.parallel import workers

__all__ = ["Drawer"]


class _Pickler(pickle.Pickler):
    """Pickles an object the drawer already holds (:meth:`Drawer.keep`) as its name."""

    def __init__(self, file: io.BytesIO, held: dict[int, tuple[str, Any]]) -> None:
        super().__init__(file, protocol=pickle.HIGHEST_PROTOCOL)
        self._held = held

    def persistent_id(self, obj: Any) -> str | None:
        name = self._held.get(id(obj))
        return name[0] if name is not None and name[1] is obj else None


class _Unpickler(pickle.Unpickler):
    def __init__(self, file: io.BytesIO, held: dict[str, Any]) -> None:
        super().__init__(file)
        self._held = held

    def persistent_load(self, pid: Any) -> Any:
        return self._held[pid]


def _serve(conn: Connection, other: Connection, warm: Callable[[], None]) -> None:
    """The forked process: warm up, then run each task it is sent, in order, and send its
    value back, until the caller closes the pipe; objects it is asked to keep are held
    for the later tasks that refer to them."""
    other.close()  # the caller's end: closed here, so the caller closing it reads as EOF
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    os.setpgid(0, 0)  # its own group: close() ends it with the workers it forks
    held: dict[str, Any] = {}
    try:
        warm()
        while True:
            fn, args = _Unpickler(io.BytesIO(conn.recv_bytes()), held).load()  # EOFError:
            if fn is None:  # the caller closed, no more tasks; None: objects to keep
                held.update(args)
                continue
            try:
                reply: tuple[str, Any] = ("ok", fn(*args))
            except BaseException as exc:  # raised again in the caller, as in one process
                reply = ("error", exc)
            conn.send(reply)
    except (EOFError, BrokenPipeError, OSError):
        return


class Drawer:
    """A forked process that imports the drawing libraries now and runs tasks later.

    Use :meth:`start` (None where only one process may run), then :meth:`submit` a
    module-level function and its arguments, do other work, and collect the value with
    :meth:`result` (values come back in the order the tasks were sent; a task sent
    while another runs waits for it). :meth:`close` ends the process (always call it; a
    ``with`` block does).
    """

    def __init__(self, warm: Callable[[], None]) -> None:
        ctx = multiprocessing.get_context("fork")
        self._conn, child = ctx.Pipe()
        self._proc = ctx.Process(target=_serve, args=(child, self._conn, warm),
                                 name="stackopt-drawer")
        self._proc.start()
        assert self._proc.pid is not None
        self._pid: int = self._proc.pid
        try:  # also here: the group exists before start() returns (no race with close)
            os.setpgid(self._pid, self._pid)
        except OSError:  # it did it first
            pass
        child.close()
        self._waiting = 0  # tasks sent whose value is not collected yet
        self._held: dict[int, tuple[str, Any]] = {}  # id -> (name, the object, kept alive)
        self._writer: threading.Thread | None = None  # a task still being written
        self._write_error: list[BaseException] = []

    @classmethod
    def start(cls, warm: Callable[[], None]) -> Drawer | None:
        """A drawer that runs ``warm()`` at once, or None where a second process is not
        available (:func:`stackopt.outputs.parallel.workers`)."""
        return cls(warm) if workers(2) >= 2 else None

    def _written(self) -> None:
        """Wait until a task written in the background is in the pipe; its error here."""
        if self._writer is not None:
            self._writer.join()
            self._writer = None
        if self._write_error:
            raise self._write_error.pop()

    def _write(self, data: bytes, after: threading.Thread | None) -> None:
        if after is not None:  # messages go in the order they were sent
            after.join()
        try:
            self._conn.send_bytes(data)
        except BaseException as exc:  # the drawer died: reported by the next call
            self._write_error.append(exc)

    def _send(self, message: tuple, wait: bool = True) -> bool:
        if self.closed:
            return False
        buf = io.BytesIO()
        try:
            _Pickler(buf, self._held).dump(message)
            if wait:
                self._written()
                self._conn.send_bytes(buf.getbuffer())
            else:  # a pipe holds little: the write waits until the drawer reads it
                self._writer = threading.Thread(
                    target=self._write, args=(buf.getvalue(), self._writer), daemon=True)
                self._writer.start()
        except Exception:  # unpicklable, or the process died: do it in the caller
            self.close()
            return False
        return True

    def submit(self, fn: Callable[..., Any], *args: Any, wait: bool = True) -> bool:
        """Send the task ``fn(*args)``; False (nothing sent, the drawer closed) if it
        cannot be pickled or the drawer is gone: the caller then runs it itself. Objects
        given to :meth:`keep` are sent as their names. ``wait=False`` returns once the
        task is pickled, while a thread writes it (the drawer reads it when it is done
        with the task before; if it died, :meth:`result` finds the pipe closed)."""
        if not self._send((fn, args), wait):
            return False
        self._waiting += 1
        return True

    def keep(self, *, wait: bool = True, **objects: Any) -> bool:
        """Send ``objects`` now, to be held there: a later task's arguments that contain
        one of them (the very object) send its name instead of its bytes. For large parts
        that do not change (e.g. a search's evaluation, sent while the analyses run, so
        that the drawing task later sends only what the analyses added). False if they
        could not be sent (the drawer is then closed); ``wait`` as :meth:`submit`."""
        if not self._send((None, objects), wait):
            return False
        self._held.update((id(v), (k, v)) for k, v in objects.items())
        return True

    @property
    def closed(self) -> bool:
        """True once :meth:`close` ran (e.g. after a task could not be sent): nothing
        sent earlier will be answered."""
        return self._conn.closed

    def result(self) -> Any:
        """The value of the oldest task not collected yet (waits for it); its exception
        is raised here (and the drawer closed)."""
        if self._waiting == 0:
            raise RuntimeError("no task was sent to the drawer, or its value was collected")
        status, value = self._conn.recv()  # (a task still being written: the other way)
        self._waiting -= 1
        if status == "error":
            self.close()
            raise value
        return value

    def close(self) -> None:
        """End the process and wait for it: it exits when its pipe closes, or, while it
        still works on a task nobody will collect, with its workers at once."""
        if self._waiting and self._proc.is_alive():
            try:
                os.killpg(self._pid, signal.SIGTERM)
            except (ProcessLookupError, PermissionError):
                pass
        if self._writer is not None:  # its write fails once the drawer is gone
            self._writer.join()
            self._writer = None
        if not self._conn.closed:
            self._conn.close()
        self._proc.join()

    def __enter__(self) -> Drawer:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
