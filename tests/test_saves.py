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
from orbitdeck.models import safe_io

TEMPORARY = re.compile(r"\.(?P<target>.+)\.[^.]+\.tmp")


@pytest.fixture
def old_and_new():
    old = load_system(demo_path("amber_pair"))
    new = load_system(demo_path("ember_chain"))
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
    new = _large(load_system(demo_path("ember_chain")), "n")
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
