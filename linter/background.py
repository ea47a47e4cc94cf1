"""Work done in a forked helper process while the caller goes on: the second core on a large deck.

``start(fn)`` forks; the helper runs ``fn()``, which returns a tuple of numpy arrays, sends them through
a pipe and ends with ``os._exit`` (no clean-up of the parent's state runs in it); ``Pending.result()``
reads them and reaps the helper. Anything that stops the helper (an exception, a signal, a broken
pipe) makes ``result()`` return None and the caller computes ``fn()`` itself, so an answer never
depends on whether the helper ran. ``start`` returns None, and nothing is forked, unless a fork is
both safe and useful: the driver allowed it (:func:`allowed`: a check in one process with more than
one job, never inside a worker of the ``--jobs`` pool, whose siblings use the other cores), on Linux,
the process may use more than one processor, and no other thread runs (a fork copies only the calling
thread; a lock another thread holds would never be released in the helper).

The helper only reads what the parent holds (the deck's bytes, a memory map of it) and writes to its
end of the pipe; it never opens, writes or executes anything.
"""
from __future__ import annotations

import contextlib
import json
import os
import struct
import sys
import threading
from typing import Callable, Iterator, Optional

_ALLOWED = False
_PLATFORM = sys.platform
_HEAD = struct.Struct("<Q")


@contextlib.contextmanager
def allowed(yes: bool) -> Iterator[None]:
    """Within the block, ``start`` may fork (when ``yes`` and the other conditions hold)."""
    global _ALLOWED
    before, _ALLOWED = _ALLOWED, bool(yes)
    try:
        yield
    finally:
        _ALLOWED = before


def _cpus() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def possible() -> bool:
    # Linux only: on macOS a forked child of a process that loaded system frameworks may crash (the reason
    # Python's multiprocessing starts its workers by spawning there)
    return (_ALLOWED and _PLATFORM.startswith("linux") and hasattr(os, "fork") and _cpus() > 1
            and threading.active_count() == 1)


class Pending:
    """A helper at work; ``result()`` once: its arrays, or None (then compute them yourself)."""

    def __init__(self, pid: int, fd: int):
        self.pid, self.fd = pid, fd

    def result(self) -> Optional[tuple]:
        out = None
        try:
            with os.fdopen(self.fd, "rb", buffering=0) as pipe:
                self.fd = -1
                out = _receive(pipe)
        except (OSError, ValueError, KeyError, TypeError):
            out = None
        finally:
            ok = self._reap()
        return out if ok else None

    def cancel(self) -> None:
        """Stop waiting for the helper: close the pipe (the helper ends on its next write) and reap it."""
        if self.fd >= 0:
            os.close(self.fd)
            self.fd = -1
        self._reap()

    def _reap(self) -> bool:
        if self.pid <= 0:
            return False
        try:
            _pid, status = os.waitpid(self.pid, 0)
        except ChildProcessError:
            return False
        finally:
            self.pid = -1
        return os.waitstatus_to_exitcode(status) == 0


def start(fn: Callable[[], tuple]) -> Optional[Pending]:
    """Run ``fn()`` in a forked helper; None when no helper was started (see the module docstring)."""
    if not possible():
        return None
    try:
        r, w = os.pipe()
    except OSError:
        return None
    try:
        pid = os.fork()
    except OSError:
        os.close(r)
        os.close(w)
        return None
    if pid == 0:                                     # the helper
        code = 1
        try:
            os.close(r)
            with os.fdopen(w, "wb", buffering=0) as pipe:
                _send(pipe, fn())
            code = 0
        except BaseException:                        # noqa: BLE001 - the helper must end here, whatever happened
            pass
        finally:
            os._exit(code)
    os.close(w)
    return Pending(pid, r)


def _send(pipe, arrays: tuple) -> None:
    """Header (per array: dtype, shape, memory order), then the arrays' bytes (a column-major array as its
    transpose, so that it arrives column-major, as the caller made it)."""
    import numpy as np

    order = ["F" if a.ndim > 1 and a.flags.f_contiguous and not a.flags.c_contiguous else "C" for a in arrays]
    flat = [np.ascontiguousarray(a.T if o == "F" else a) for a, o in zip(arrays, order)]
    head = json.dumps([[a.dtype.str, list(a.shape), o] for a, o in zip(arrays, order)]).encode()
    pipe.write(_HEAD.pack(len(head)) + head)
    for a in flat:
        view = memoryview(a.reshape(-1).view(np.uint8))
        while view.nbytes:
            n = pipe.write(view)
            view = view[n:]


def _receive(pipe) -> tuple:
    import numpy as np

    (size,) = _HEAD.unpack(_read_exactly(pipe, _HEAD.size))
    if size > 1 << 20:
        raise ValueError("helper header too long")
    out = []
    for dtype, shape, order in json.loads(_read_exactly(pipe, size)):
        shape = tuple(int(s) for s in shape)
        arr = np.empty(shape[::-1] if order == "F" else shape, dtype=np.dtype(dtype))
        view = memoryview(arr.reshape(-1).view(np.uint8))
        while view.nbytes:
            n = pipe.readinto(view)
            if not n:
                raise ValueError("helper ended early")
            view = view[n:]
        out.append(arr.T if order == "F" else arr)
    if pipe.read(1):
        raise ValueError("helper sent more than it announced")
    return tuple(out)


def _read_exactly(pipe, n: int) -> bytes:
    buf = bytearray()
    while len(buf) < n:
        got = pipe.read(n - len(buf))
        if not got:
            raise ValueError("helper ended early")
        buf += got
    return bytes(buf)
