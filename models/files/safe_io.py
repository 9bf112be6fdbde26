"""Reading and writing files safely: regular files only, bounded reads, saves that never clobber.

Reading takes only regular files (links are followed), and never more than
a stated number of bytes, whatever size the file reports. Writing goes
through a temporary file beside the target and a rename, so a failed or
killed write never leaves a damaged file; it writes through a symbolic link
to the file the link points to, keeps the replaced file's mode, owner and
extended attributes where this process may set them, refuses to replace
anything but a regular file, and refuses a read-only file or one with other
hard links unless told to overwrite it. Temporaries left by killed writes
(``.NAME.XXXXXXXX.tmp`` beside the target, held by no running write) are
removed by the next write to the same target.
"""

from __future__ import annotations

import errno
import os
import re
import stat
import tempfile
import time
from pathlib import Path

from .problems import Problem, SystemFileError

try:
    import fcntl
except ImportError:  # not POSIX: temporaries are told stale by their age alone
    fcntl = None

#: a temporary untouched for this long and locked by no write is left from a killed write [s]
STALE_TEMPORARY_S = 10.0

_FILE_KINDS = ((stat.S_ISFIFO, "a named pipe"), (stat.S_ISCHR, "a character device"),
               (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket"))


def file_kind(mode: int) -> str:
    """What a file of ``mode`` is, for messages ("a named pipe", ...)."""
    return next((name for test, name in _FILE_KINDS if test(mode)), "not a plain file")


def _problem(source: str, reason: str) -> SystemFileError:
    return SystemFileError([Problem(source, "", reason)])


def _not_regular(source: str, mode: int) -> SystemFileError:
    if stat.S_ISDIR(mode):
        return _problem(source, f"cannot be read: {os.strerror(errno.EISDIR)}")
    return _problem(source, f"is not a regular file ({file_kind(mode)}); only regular files are read")


def read_regular_file(path, limit: int, what: str = "system files") -> bytes:
    """The content of the regular file at ``path`` (links followed), at most ``limit`` bytes.

    Devices, named pipes and sockets are refused before they are opened
    (and again after, in case the path changed in between: the file is
    opened without blocking and checked with ``fstat``); a file is read up
    to ``limit`` + 1 bytes whatever size it reports, so ``/dev/zero`` behind
    a link, a ``/proc`` file or a growing file cannot fill the memory.

    Raises
    ------
    SystemFileError
        Naming the file and the reason: missing, unreadable, not a regular
        file, or larger than ``limit`` (``what`` names the kind of file in
        that message).
    """
    source = str(path)

    def too_large(reason: str) -> SystemFileError:
        return _problem(source, f"{reason}; {what} are limited to {limit} bytes")

    def check(info: os.stat_result) -> None:
        if not stat.S_ISREG(info.st_mode):
            raise _not_regular(source, info.st_mode)
        if info.st_size > limit:
            raise too_large(f"file is {info.st_size} bytes")

    try:
        check(os.stat(path))
        descriptor = os.open(path, os.O_RDONLY | os.O_NONBLOCK | os.O_NOCTTY | getattr(os, "O_CLOEXEC", 0))
    except OSError as error:
        raise _problem(source, f"cannot be read: {error.strerror or error}") from None
    try:
        check(os.fstat(descriptor))
        chunks, held = [], 0
        while held <= limit:
            chunk = os.read(descriptor, min(limit + 1 - held, 1 << 20))
            if not chunk:
                break
            chunks.append(chunk)
            held += len(chunk)
    except OSError as error:
        raise _problem(source, f"cannot be read: {error.strerror or error}") from None
    finally:
        os.close(descriptor)
    if held > limit:
        raise too_large(f"holds more than {limit} bytes")
    return b"".join(chunks)


def _current_umask() -> int:
    """The process umask: read from /proc where the system has it, else by setting and restoring it
    (which another thread could see for an instant)."""
    try:
        with open("/proc/self/status", encoding="ascii") as status:
            for line in status:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError, IndexError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def temporary_pattern(target: Path) -> re.Pattern:
    """Names of the temporaries a write to ``target`` makes (``tempfile.mkstemp``'s 8 random characters)."""
    return re.compile(re.escape(f".{target.name}.") + r"[A-Za-z0-9_]{8}" + re.escape(".tmp"))


def _lock(descriptor: int, wait: bool) -> bool:
    """An exclusive lock on an open file; False when another process holds one (without ``wait``)."""
    if fcntl is None:
        return True
    try:
        fcntl.flock(descriptor, fcntl.LOCK_EX | (0 if wait else fcntl.LOCK_NB))
    except OSError:
        return False
    return True


def remove_stale_temporaries(target: Path) -> list[str]:
    """Remove the temporaries of killed writes to ``target``; the names removed.

    A temporary is stale when it is a regular file (not a link) named as a
    write to ``target`` names them, untouched for :data:`STALE_TEMPORARY_S`
    and not locked by a write in progress (each write holds a lock on its
    temporary while it fills it). Anything else is left alone.
    """
    pattern, removed = temporary_pattern(target), []
    try:
        entries = list(os.scandir(target.parent))
    except OSError:
        return removed
    for entry in entries:
        if not pattern.fullmatch(entry.name):
            continue
        try:
            descriptor = os.open(entry.path, os.O_RDONLY | os.O_NOFOLLOW | os.O_NONBLOCK | os.O_NOCTTY)
        except OSError:
            continue
        try:
            info = os.fstat(descriptor)
            if (stat.S_ISREG(info.st_mode) and time.time() - info.st_mtime >= STALE_TEMPORARY_S
                    and _lock(descriptor, wait=False)):
                os.unlink(entry.path)
                removed.append(entry.name)
        except OSError:
            pass
        finally:
            os.close(descriptor)
    return removed


def _keep_attributes(info: os.stat_result, descriptor: int, source: Path) -> None:
    """Give the new file the replaced one's owner, group and extended attributes where permitted."""
    try:
        os.fchown(descriptor, info.st_uid, info.st_gid)
    except OSError:
        pass  # only the owner's group, or nothing, may be set by this process: keep what it may
    if not hasattr(os, "listxattr"):
        return
    try:
        names = os.listxattr(source)
    except OSError:
        return
    for name in names:
        try:
            os.setxattr(descriptor, name, os.getxattr(source, name))
        except OSError:
            pass


def _refusal(target: Path, info: os.stat_result, overwrite: bool) -> str | None:
    """Why the existing file ``target`` may not be replaced, or None when it may."""
    if stat.S_ISDIR(info.st_mode):
        return f"cannot be written: {os.strerror(errno.EISDIR)}"
    if not stat.S_ISREG(info.st_mode):
        return f"is not a regular file ({file_kind(info.st_mode)}); only regular files are replaced"
    if overwrite:
        return None
    hint = "to replace it anyway, ask to overwrite it (--overwrite on the command line)"
    if info.st_mode & 0o222 == 0 or not os.access(target, os.W_OK):
        return f"is read-only, so it was left as it is; {hint}"
    if info.st_nlink > 1:
        return (f"has {info.st_nlink} hard links, which replacing it would leave with the old content, so it was "
                f"left as it is; {hint}")
    return None


def atomic_write(path, data: bytes, overwrite: bool = False) -> None:
    """Write ``data`` to ``path`` through a temporary file in the same folder and a rename.

    Parameters
    ----------
    path : str or os.PathLike
        The file to write; a symbolic link is written through (the file it
        points to is replaced, the link stays).
    data : bytes
        The whole new content.
    overwrite : bool
        Also replace a read-only file, or one with other hard links (which
        keep the old content).

    Raises
    ------
    SystemFileError
        When the target is not a regular file, is read-only or hard-linked
        (without ``overwrite``), or the folder cannot be written; an existing
        file is left untouched.
    """
    source = str(path)
    target = Path(os.path.realpath(path))
    try:
        info = os.stat(target)
    except FileNotFoundError:
        info = None
    except OSError as error:
        raise _problem(source, f"cannot be written: {error.strerror or error}") from None
    refusal = None if info is None else _refusal(target, info, overwrite)
    if refusal:
        raise _problem(source, refusal)
    remove_stale_temporaries(target)
    try:
        handle, temporary = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    except OSError as error:
        raise _problem(source, f"cannot be written: {error.strerror or error}") from None
    handed_over = False
    try:
        _lock(handle, wait=True)  # so that no other write takes this temporary for a stale one
        if info is not None:
            _keep_attributes(info, handle, target)
        # the owner first: changing it may clear the set-user-id bits that the mode then restores
        os.fchmod(handle, stat.S_IMODE(info.st_mode) if info is not None else 0o666 & ~_current_umask())
        handed_over = True
        with os.fdopen(handle, "wb") as stream:
            stream.write(data)
            stream.flush()
            os.fsync(stream.fileno())
        os.replace(temporary, target)
    except BaseException as error:
        if not handed_over:
            os.close(handle)
        Path(temporary).unlink(missing_ok=True)
        if isinstance(error, OSError):
            raise _problem(source, f"cannot be written: {error.strerror or error}") from None
        raise
