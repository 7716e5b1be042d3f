"""Atomic file writes: the one place where lowenergy puts a file on disk.

Every file the package writes (tables of Wilson coefficients, fixed ansatz
files, reports, the MZV and single-valued caches, memory-mapped word rows)
is first written to a temporary file in the target's directory and then moved
over the target with :func:`os.replace`, which is atomic on one file system.
A failure (full disk, an exception while writing, Ctrl-C) therefore never
leaves a partial file under the target's name, and the temporary file is
removed.  Only a hard kill (``SIGKILL``, power loss) can leave a temporary
file behind; its name starts with ``.`` and ends with ``.tmp``.

:func:`atomic_path` yields the temporary path for writers that need a file
name (``numpy.lib.format.open_memmap``); :func:`write_atomic` writes text or
bytes.  Both raise :class:`OSError` as the operating system reports it; the
callers decide whether that is the user's problem (an unwritable ``--out``)
or a cache that may be skipped.

>>> import os, tempfile
>>> d = tempfile.mkdtemp()
>>> p = write_atomic(os.path.join(d, "a.txt"), "one\\n")
>>> p.read_text(), sorted(os.listdir(d))
('one\\n', ['a.txt'])
>>> try:
...     with atomic_path(os.path.join(d, "a.txt")) as tmp:
...         _ = open(tmp, "w").write("half")
...         raise KeyboardInterrupt
... except KeyboardInterrupt:
...     pass
>>> p.read_text(), sorted(os.listdir(d))
('one\\n', ['a.txt'])
"""

from __future__ import annotations

import os
import tempfile
from contextlib import contextmanager
from pathlib import Path
from typing import Iterator, Union

__all__ = ["atomic_path", "write_atomic"]

PathLike = Union[str, "os.PathLike[str]"]


def _umask() -> int:
    """The process umask, read without changing it where /proc allows."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError, IndexError):
        pass
    old = os.umask(0o022)  # pragma: no cover - only without /proc
    os.umask(old)  # pragma: no cover
    return old  # pragma: no cover


@contextmanager
def atomic_path(path: PathLike, *, durable: bool = True) -> Iterator[str]:
    """Yield a temporary file name next to ``path``; on a normal exit move it
    over ``path``, on any exception remove it and re-raise.

    The temporary file exists (empty) when the block starts and gets the
    permissions a newly created file would get (``0o666`` minus the umask,
    not ``mkstemp``'s ``0o600``).  With ``durable`` the data is synced to
    disk before the move.
    """
    target = Path(os.fspath(path))
    directory = target.parent if str(target.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=directory)
    os.close(fd)
    try:
        yield tmp
        if durable:
            with open(tmp, "rb+") as fh:
                os.fsync(fh.fileno())
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def write_atomic(path: PathLike, data: Union[str, bytes], *, durable: bool = True) -> Path:
    """Write ``data`` (text as UTF-8, or bytes) to ``path`` atomically;
    returns the path.  Raises :class:`OSError` on failure (no file left)."""
    payload = data.encode("utf-8") if isinstance(data, str) else data
    with atomic_path(path, durable=durable) as tmp:
        with open(tmp, "wb") as fh:
            fh.write(payload)
    return Path(os.fspath(path))
