"""Files of the cache: private folders owned along the path, reads that neither follow links
nor block, atomic writes, content digests.

On a shared machine a cache folder is a place where someone else could plant a file for your
next run, and a cache file may be a FIFO, a link or a device instead of an entry. Everything
the cache reads or writes goes through here:

* :func:`private_dirs` makes (mode 0700, whatever the umask) and checks every folder from the
  cache root down to an entry's folder: each must belong to the user running hazlint, a folder
  of ours left open to others is closed again, and below the root nothing may be a link;
* :func:`open_private` opens a file without following a link and without blocking, and only
  when it is a regular file of ours (:class:`Untrusted` otherwise);
* :func:`atomic_write` writes a temporary file and renames it, so no reader sees half a file;
* :func:`digest_file` hashes a regular file in pieces (never a FIFO: that would block).
"""
from __future__ import annotations

import errno
import hashlib
import os
import stat
import tempfile
from pathlib import Path


class Untrusted(OSError):
    """A cache folder or file that is not ours (owner, type, permissions)."""


def _uid() -> int | None:
    return os.getuid() if hasattr(os, "getuid") else None


def _check_dir(path: Path, st: os.stat_result) -> None:
    """A cache folder must be a real folder of ours, private; a folder of ours that others
    could write (made under an old umask) is made private again."""
    if not stat.S_ISDIR(st.st_mode):
        raise Untrusted(errno.ENOTDIR, "not a folder", str(path))
    uid = _uid()
    if uid is None:
        return
    if st.st_uid != uid:
        raise Untrusted(errno.EPERM, "the folder belongs to another user", str(path))
    if st.st_mode & 0o077:
        os.chmod(path, 0o700)


def private_dirs(root: Path, folder: Path, *, create: bool) -> bool:
    """Check (and with ``create``, make) every folder from ``root`` down to ``folder``: each
    mode 0700 and ours. ``root`` itself may be reached through a link (a cache moved to
    another disk); below it nothing may be a link. Missing parents of ``root`` are created
    0700 too. Returns False when a folder is missing and ``create`` is false; raises
    :class:`Untrusted` (an ``OSError``) for a folder that is not ours."""
    root = Path(root)
    if not root.exists():
        if not create:
            return False
        missing = []
        p = root
        while not p.exists() and p != p.parent:
            missing.append(p)
            p = p.parent
        for d in reversed(missing):
            try:
                os.mkdir(d, 0o700)
            except FileExistsError:
                pass
            os.chmod(d, 0o700)
    _check_dir(root, os.stat(root))
    rel = Path(folder).relative_to(root)
    p = root
    for part in rel.parts:
        p = p / part
        try:
            st = os.lstat(p)
        except FileNotFoundError:
            if not create:
                return False
            try:
                os.mkdir(p, 0o700)
            except FileExistsError:
                pass
            os.chmod(p, 0o700)
            st = os.lstat(p)
        _check_dir(p, st)
    return True


def open_private(path: Path):
    """The cache file ``path`` opened for reading (binary): without following a link and
    without blocking (a FIFO must not hang the run), and only when it is a regular file of
    ours. Raises ``FileNotFoundError`` for a missing file and :class:`Untrusted` for anything
    else not to be read."""
    fd = _open_private_fd(path)
    return os.fdopen(fd, "rb")


def read_private(path: Path) -> bytes:
    """The bytes of the cache file ``path`` (see :func:`open_private`)."""
    with open_private(path) as fh:
        return fh.read()


def _open_private_fd(path: Path) -> int:
    flags = os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_NONBLOCK", 0)
    try:
        fd = os.open(path, flags)
    except FileNotFoundError:
        raise
    except OSError as exc:
        raise Untrusted(exc.errno or errno.EPERM, f"cannot open ({exc.strerror})",
                        str(path)) from None
    try:
        st = os.fstat(fd)
        if not stat.S_ISREG(st.st_mode):
            raise Untrusted(errno.EPERM, "not a regular file", str(path))
        uid = _uid()
        if uid is not None and st.st_uid != uid:
            raise Untrusted(errno.EPERM, "the file belongs to another user", str(path))
        if hasattr(os, "set_blocking"):
            os.set_blocking(fd, True)
    except BaseException:
        os.close(fd)
        raise
    return fd


def digest_bytes(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def digest_file(path: str | os.PathLike) -> str | None:
    """sha256 hex of a regular file's content; None when it cannot be read (or is a FIFO,
    a device, a folder: reading those could block or never end)."""
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError:
        return None
    try:
        if not stat.S_ISREG(os.fstat(fd).st_mode):
            return None
        if hasattr(os, "set_blocking"):
            os.set_blocking(fd, True)
        with os.fdopen(fd, "rb") as fh:
            fd = -1
            return digest_stream(fh)
    except OSError:
        return None
    finally:
        if fd >= 0:
            os.close(fd)


def digest_stream(fh) -> str:
    """sha256 hex of what is left in the binary stream ``fh``, read in pieces."""
    h = hashlib.sha256()
    while True:
        b = fh.read(1 << 20)
        if not b:
            return h.hexdigest()
        h.update(b)


def atomic_write(path: Path, write, *, private: bool = True) -> None:
    """Create ``path`` (and its folder, private) with what ``write(stream)`` writes (text,
    UTF-8, no newline translation): into a temporary file in the same folder, then
    :func:`os.replace`, so a reader never sees half a file. The temporary file is removed on
    any failure, which propagates. ``private=False`` is for files users keep (a baseline): the
    folder must exist and the file gets the usual permissions (0666 less the umask)."""
    path = Path(path)
    if private:
        path.parent.mkdir(parents=True, exist_ok=True, mode=0o700)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=".tmp-", suffix=path.suffix)
    try:
        if not private:
            umask = os.umask(0)
            os.umask(umask)
            os.chmod(tmp, 0o666 & ~umask)
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            write(fh)
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
