"""Saving is safe: a temporary file and a rename, so a failed or killed save never damages a file."""

from __future__ import annotations

import errno
import os
import random
import re
import select
import signal
import stat
import subprocess
import sys
import time

import pytest

from orbitdeck.demo_systems import demo_path
from orbitdeck.models import SystemFileError, dumps_system, load_system, save_system
from orbitdeck.models.files import safe_io

TEMPORARY = re.compile(r"\.(?P<target>.+)\.[^.]+\.tmp")


@pytest.fixture
def old_and_new():
    old = load_system(demo_path("amber_pair"))
    new = load_system(demo_path("ossery_loom"))
    return old, new


@pytest.fixture
def target(tmp_path, old_and_new):
    path = tmp_path / "system.toml"
    path.write_text(dumps_system(old_and_new[0]), encoding="utf-8")
    return path


def _listing(folder):
    return sorted(p.name for p in folder.iterdir())


def test_save_replaces_the_file_through_a_temporary_one(monkeypatch, target, old_and_new):
    old_text, new_text = dumps_system(old_and_new[0]), dumps_system(old_and_new[1])
    renames = []
    real_replace = os.replace

    def watching_replace(source, destination):
        # at the moment of the rename the new content is complete beside the untouched old file
        assert target.read_text() == old_text
        assert open(source).read() == new_text
        renames.append((os.fspath(source), os.fspath(destination)))
        return real_replace(source, destination)

    monkeypatch.setattr(safe_io.os, "replace", watching_replace)
    save_system(old_and_new[1], target)
    ((source, destination),) = renames
    assert os.path.dirname(source) == str(target.parent)  # same folder, so the rename is atomic
    assert TEMPORARY.fullmatch(os.path.basename(source)).group("target") == target.name
    assert os.fspath(destination) == str(target)
    assert target.read_text() == new_text
    assert _listing(target.parent) == [target.name]


def _refused(call, path):
    with pytest.raises(SystemFileError) as caught:
        call()
    (problem,) = caught.value.problems
    assert problem.file == str(path) and problem.field == ""
    return problem.reason


def test_failed_rename_leaves_the_old_file(monkeypatch, target, old_and_new):
    before = target.read_bytes()

    def failing_replace(source, destination):
        raise OSError(errno.EIO, os.strerror(errno.EIO))

    monkeypatch.setattr(safe_io.os, "replace", failing_replace)
    reason = _refused(lambda: save_system(old_and_new[1], target), target)
    assert reason == f"cannot be written: {os.strerror(errno.EIO)}"
    assert target.read_bytes() == before
    assert _listing(target.parent) == [target.name]


def test_disk_full_half_way_leaves_the_old_file(monkeypatch, target, old_and_new):
    before = target.read_bytes()
    real_fdopen = os.fdopen

    class HalfWritten:
        """A stream that writes half of what it is given, then finds the disk full."""

        def __init__(self, fd, mode):
            self.stream = real_fdopen(fd, mode)

        def write(self, data):
            self.stream.write(data[: len(data) // 2])
            self.stream.flush()
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            self.stream.close()

    monkeypatch.setattr(safe_io.os, "fdopen", HalfWritten)
    reason = _refused(lambda: save_system(old_and_new[1], target), target)
    assert os.strerror(errno.ENOSPC) in reason
    assert target.read_bytes() == before
    assert _listing(target.parent) == [target.name]


def test_failed_flush_to_disk_leaves_the_old_file(monkeypatch, target, old_and_new):
    before = target.read_bytes()

    def failing_fsync(fd):
        raise OSError(errno.EIO, os.strerror(errno.EIO))

    monkeypatch.setattr(safe_io.os, "fsync", failing_fsync)
    _refused(lambda: save_system(old_and_new[1], target), target)
    assert target.read_bytes() == before
    assert _listing(target.parent) == [target.name]


def test_interrupted_save_leaves_no_temporary_file(monkeypatch, target, old_and_new):
    before = target.read_bytes()

    def interrupted_fsync(fd):
        raise KeyboardInterrupt

    monkeypatch.setattr(safe_io.os, "fsync", interrupted_fsync)
    with pytest.raises(KeyboardInterrupt):
        save_system(old_and_new[1], target)
    assert target.read_bytes() == before
    assert _listing(target.parent) == [target.name]


def test_save_keeps_the_permissions_of_the_file(tmp_path, target, old_and_new):
    target.chmod(0o664)
    save_system(old_and_new[1], target)
    assert stat.S_IMODE(target.stat().st_mode) == 0o664
    umask = os.umask(0)
    os.umask(umask)
    fresh = tmp_path / "fresh.toml"
    save_system(old_and_new[1], fresh)
    assert stat.S_IMODE(fresh.stat().st_mode) == 0o666 & ~umask


def test_save_into_a_missing_folder_is_a_clear_error(tmp_path, old_and_new):
    path = tmp_path / "no" / "such" / "folder" / "system.toml"
    reason = _refused(lambda: save_system(old_and_new[1], path), path)
    assert reason == "cannot be written: No such file or directory"
    assert _listing(tmp_path) == []


def test_save_below_a_file_is_a_clear_error(tmp_path, old_and_new):
    # tests run as root, so permissions cannot make a folder unwritable; a file in the way can
    (tmp_path / "plain").write_text("not a folder")
    path = tmp_path / "plain" / "system.toml"
    reason = _refused(lambda: save_system(old_and_new[1], str(path)), path)
    assert reason == "cannot be written: Not a directory"
    assert (tmp_path / "plain").read_text() == "not a folder"


def test_save_over_a_folder_is_a_clear_error(tmp_path, old_and_new):
    folder = tmp_path / "taken"
    folder.mkdir()
    (folder / "inside.txt").write_text("kept")
    reason = _refused(lambda: save_system(old_and_new[1], folder), folder)
    assert reason.startswith("cannot be written: ")
    assert _listing(folder) == ["inside.txt"] and _listing(tmp_path) == ["taken"]


# -- killed mid-save ---------------------------------------------------------------------------

SAVER = r"""
import sys
from orbitdeck.models import load_system, save_system
first, second, target = sys.argv[1:]
systems = [load_system(second), load_system(first)]
save_system(systems[0], target)
print("ready", flush=True)
while True:
    for system in systems:
        save_system(system, target)
"""
KILLS = 6


def _large(system, letter):
    system.notes = letter * 1_400_000  # about 1.4 MB, under the 2 MB file limit: a write that takes a while
    return system


def test_killed_save_leaves_old_or_new_content(tmp_path):
    old = _large(load_system(demo_path("amber_pair")), "o")
    new = _large(load_system(demo_path("ossery_loom")), "n")
    contents = {dumps_system(old).encode("utf-8"), dumps_system(new).encode("utf-8")}
    sources = tmp_path / "sources"
    sources.mkdir()
    save_system(old, sources / "old.toml")
    save_system(new, sources / "new.toml")
    work = tmp_path / "work"
    work.mkdir()
    target = work / "system.toml"
    save_system(old, target)
    rng = random.Random(7)
    for _ in range(KILLS):
        child = subprocess.Popen([sys.executable, "-c", SAVER, str(sources / "old.toml"), str(sources / "new.toml"),
                                  str(target)], stdout=subprocess.PIPE, text=True)
        try:
            ready, _, _ = select.select([child.stdout], [], [], 120)
            assert ready and child.stdout.readline() == "ready\n"
            time.sleep(rng.uniform(0.0, 0.8))
        finally:
            child.send_signal(signal.SIGKILL)
            child.wait(timeout=60)
            child.stdout.close()
        assert child.returncode == -signal.SIGKILL
        assert target.read_bytes() in contents
        load_system(target)  # complete, parseable
        # a killed save cannot clean up after itself: leftovers are hidden temporaries beside the target
        for name in _listing(work):
            if name != target.name:
                assert TEMPORARY.fullmatch(name).group("target") == target.name, name


# -- what is at the path ------------------------------------------------------------------------

def test_a_named_pipe_or_a_device_at_the_path_is_refused_and_kept(tmp_path, old_and_new):
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    reason = _refused(lambda: save_system(old_and_new[1], fifo), fifo)
    assert reason == "is not a regular file (a named pipe); only regular files are replaced"
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)
    device = tmp_path / "null.toml"
    device.symlink_to("/dev/null")
    reason = _refused(lambda: safe_io.atomic_write(device, b"x"), device)
    assert reason == "is not a regular file (a character device); only regular files are replaced"
    assert os.readlink(device) == "/dev/null" and stat.S_ISCHR(os.stat("/dev/null").st_mode)
    assert _listing(tmp_path) == ["null.toml", "pipe.toml"]


def test_a_save_through_a_link_writes_the_file_it_points_to(tmp_path, target, old_and_new):
    link = tmp_path / "link.toml"
    link.symlink_to(target.name)
    save_system(old_and_new[1], link)
    assert os.readlink(link) == target.name  # still a link
    assert target.read_text() == dumps_system(old_and_new[1])
    chain = tmp_path / "chain.toml"
    chain.symlink_to(link)
    save_system(old_and_new[0], chain)
    assert chain.is_symlink() and link.is_symlink() and target.read_text() == dumps_system(old_and_new[0])
    assert _listing(tmp_path) == ["chain.toml", "link.toml", target.name]


def test_a_read_only_file_is_kept_unless_told_to_overwrite(target, old_and_new):
    before = target.read_bytes()
    target.chmod(0o444)
    reason = _refused(lambda: save_system(old_and_new[1], target), target)
    assert reason.startswith("is read-only, so it was left as it is") and "overwrite" in reason
    assert target.read_bytes() == before
    save_system(old_and_new[1], target, overwrite=True)
    assert target.read_text() == dumps_system(old_and_new[1])
    assert stat.S_IMODE(target.stat().st_mode) == 0o444  # still read-only


def test_a_hard_linked_file_is_kept_unless_told_to_overwrite(tmp_path, target, old_and_new):
    twin = tmp_path / "twin.toml"
    os.link(target, twin)
    before = target.read_bytes()
    reason = _refused(lambda: save_system(old_and_new[1], target), target)
    assert reason.startswith("has 2 hard links") and "overwrite" in reason
    assert target.read_bytes() == before and os.path.samefile(target, twin)
    save_system(old_and_new[1], target, overwrite=True)
    assert target.read_text() == dumps_system(old_and_new[1]) and twin.read_bytes() == before


def test_a_save_keeps_owner_group_and_extended_attributes(target, old_and_new):
    # the tests run as root, who may give the file any owner: the save must give the new file the same
    if os.geteuid() != 0:
        pytest.skip("only root may give a file another owner")
    os.chown(target, 4321, 8765)
    try:
        os.setxattr(target, "user.orbitdeck.note", b"kept")
    except OSError:
        attributes = False  # a file system without user extended attributes
    else:
        attributes = True
    save_system(old_and_new[1], target)
    info = target.stat()
    assert (info.st_uid, info.st_gid) == (4321, 8765)
    if attributes:
        assert os.getxattr(target, "user.orbitdeck.note") == b"kept"


def test_stale_temporaries_of_killed_saves_are_cleaned_and_others_kept(tmp_path, target, old_and_new):
    stale = tmp_path / f".{target.name}.ab12cd34.tmp"
    fresh = tmp_path / f".{target.name}.ef56gh78.tmp"
    busy = tmp_path / f".{target.name}.ij90kl12.tmp"
    other = tmp_path / ".other.toml.mn34op56.tmp"
    lookalike = tmp_path / f".{target.name}.backup"
    for path in (stale, fresh, busy, other, lookalike):
        path.write_text("partial")
    old = time.time() - 3600
    for path in (stale, busy, other, lookalike):
        os.utime(path, (old, old))
    linked = tmp_path / f".{target.name}.qr78st90.tmp"
    linked.symlink_to(lookalike)
    os.utime(linked, (old, old), follow_symlinks=False)
    holder = subprocess.Popen([sys.executable, "-c", "import fcntl, sys, time\n"
                               "f = open(sys.argv[1], 'rb'); fcntl.flock(f, fcntl.LOCK_EX); print('held', flush=True)\n"
                               "time.sleep(60)", str(busy)], stdout=subprocess.PIPE, text=True)
    try:
        assert holder.stdout.readline() == "held\n"  # a save in progress elsewhere holds its temporary
        save_system(old_and_new[1], target)
    finally:
        holder.kill()
        holder.wait()
        holder.stdout.close()
    assert target.read_text() == dumps_system(old_and_new[1])
    assert _listing(tmp_path) == sorted([target.name, fresh.name, busy.name, other.name, lookalike.name, linked.name])


def test_a_system_that_would_not_load_back_is_not_written(tmp_path, target, old_and_new):
    from orbitdeck.models.files.system_file import MAX_FILE_BYTES

    before = target.read_bytes()
    system = old_and_new[1]
    system.notes = "n" * MAX_FILE_BYTES  # the notes alone pass the 2 MiB limit of system files
    with pytest.raises(SystemFileError) as caught:
        save_system(system, target)
    problems = caught.value.problems
    assert problems[0].reason == "not written: the system file would not load back"
    assert any("limited to" in p.reason for p in problems[1:])
    assert target.read_bytes() == before and _listing(tmp_path) == [target.name]
