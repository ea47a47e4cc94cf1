"""Work done in a forked helper process while the caller goes on: the second core on a large deck.

``start(fn)`` forks; the helper runs ``fn()``, which returns a tuple of numpy arrays, writes them into a
shared memory file (``memfd_create``, made before the fork) and ends with ``os._exit`` (no clean-up of
the parent's state runs in it); ``Pending.result()`` reaps the helper and maps the arrays (no copy).
Anything that stops the helper (an exception, a signal) makes ``result()`` return None and the
caller computes ``fn()`` itself, so an answer never depends on whether the helper ran. ``start``
returns None, and nothing is forked, unless a fork is both safe and useful: the driver allowed it
(:func:`allowed`: a check in one process with more than one job, never inside a worker of the
``--jobs`` pool, whose siblings use the other cores), on Linux, the process may use more than one
processor, and no other thread runs (a fork copies only the calling thread; a lock another thread
holds would never be released in the helper).

The helper only reads what the parent holds (the deck's bytes, a memory map of it) and writes to the
shared memory file; it never opens, writes or executes anything else.
"""
from __future__ import annotations

import contextlib
import json
import math
import mmap
import os
import signal
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
        try:
            ok = self._reap()                       # the helper has written everything when it has ended
            return _load(self.fd) if ok else None
        except (OSError, ValueError, KeyError, TypeError):
            return None
        finally:
            self._close()

    def cancel(self) -> None:
        """Stop the helper and forget its work."""
        if self.pid > 0:
            try:
                os.kill(self.pid, signal.SIGKILL)
            except OSError:
                pass
        self._reap()
        self._close()

    def _close(self) -> None:
        if self.fd >= 0:
            os.close(self.fd)
            self.fd = -1

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
        fd = os.memfd_create("deckwarden-helper", os.MFD_CLOEXEC)
    except (AttributeError, OSError):
        return None
    try:
        pid = os.fork()
    except OSError:
        os.close(fd)
        return None
    if pid == 0:                                     # the helper
        code = 1
        try:
            _store(fd, fn())
            code = 0
        except BaseException:                        # noqa: BLE001 - the helper must end here, whatever happened
            pass
        finally:
            os._exit(code)
    return Pending(pid, fd)


_ALIGN = 64


def _store(fd: int, arrays: tuple) -> None:
    """Write the arrays into the shared memory file: the header length (8 bytes), the header (per array:
    dtype, shape, memory order, offset), then each array's bytes. A 2-d array whose columns are each
    contiguous (column-major, or the first rows of a column-major table) is written as its transpose, so
    that it comes back column-major, as the caller made it; each array is copied once, straight into the
    file."""
    import numpy as np

    arrays = [np.asarray(a) for a in arrays]
    order = ["F" if a.ndim == 2 and a.strides[0] == a.itemsize and not a.flags.c_contiguous else "C"
             for a in arrays]
    room = 4096 + 256 * len(arrays)                 # the header's place, before the first array
    at, spec = room, []
    for a, o in zip(arrays, order):
        spec.append([a.dtype.str, list(a.shape), o, at])
        at += -(-a.nbytes // _ALIGN) * _ALIGN
    head = json.dumps(spec).encode()
    if _HEAD.size + len(head) > room:
        raise ValueError("helper header too long")
    os.ftruncate(fd, at)
    with mmap.mmap(fd, at) as mm:
        mm[:_HEAD.size + len(head)] = _HEAD.pack(len(head)) + head
        for a, (_d, _s, o, off) in zip(arrays, spec):
            if a.nbytes:
                src = a.T if o == "F" else a
                dst = np.frombuffer(mm, dtype=a.dtype, count=a.size, offset=off).reshape(src.shape)
                dst[...] = src
                del dst


def _load(fd: int) -> tuple:
    """The arrays of :func:`_store`, as views of the shared memory (no copy; it is freed with them)."""
    import numpy as np

    size = os.fstat(fd).st_size
    if size < _HEAD.size:
        raise ValueError("helper wrote nothing")
    mm = mmap.mmap(fd, size)
    (n,) = _HEAD.unpack(mm[:_HEAD.size])
    if _HEAD.size + n > size:
        raise ValueError("helper header too long")
    out = []
    for dtype, shape, order, off in json.loads(mm[_HEAD.size:_HEAD.size + n]):
        dt = np.dtype(dtype)
        shape = tuple(int(s) for s in shape)
        count = math.prod(shape)
        if int(off) + count * dt.itemsize > size:
            raise ValueError("helper array past the end")
        arr = np.frombuffer(mm, dtype=dt, count=count, offset=int(off)) if count else np.zeros(0, dtype=dt)
        arr = arr.reshape(shape[::-1] if order == "F" else shape)
        out.append(arr.T if order == "F" else arr)
    return tuple(out)
