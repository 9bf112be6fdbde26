"""Only regular files are read, and never more than the size limit, whatever the file reports.

A system path (or a snapshot given to ``--extract``) that is a device, a named
pipe or a symbolic link to either is refused at once with a message naming the
file and what it is; a file that reports a small size but holds more is read
only up to the limit. The commands run in child processes with a memory
ceiling and a time limit, so that a regression fails the test instead of
filling the machine's memory or hanging it.
"""

from __future__ import annotations

import os
import resource
import subprocess
import sys
import tracemalloc
from pathlib import Path

import pytest

from orbitdeck.demo_systems import demo_path
from orbitdeck.models import SystemFileError, load_system
from orbitdeck.models.files import safe_io
from orbitdeck.models.files.system_file import MAX_FILE_BYTES, read_regular_file

#: address-space ceiling of a command's child process [bytes]: the interpreter with astropy needs far less
#: than this, reading /dev/zero until it fails would reach it within seconds
MEMORY_CEILING = 3 * 1024**3
#: a command that hangs is stopped after this many seconds
TIME_LIMIT_S = 60
REAL_STAT, REAL_FSTAT = os.stat, os.fstat


def _limit_memory():
    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_CEILING, MEMORY_CEILING))


def run_limited(*argv) -> subprocess.CompletedProcess:
    """``orbitdeck ARGV...`` in a child with a memory ceiling; TimeoutExpired when it hangs."""
    env = {k: v for k, v in os.environ.items() if k != "ORBITDECK_DEBUG"}
    env["OPENBLAS_NUM_THREADS"] = "1"
    return subprocess.run([sys.executable, "-m", "orbitdeck.dashboard.cli", *map(str, argv)], capture_output=True,
                          text=True, timeout=TIME_LIMIT_S, preexec_fn=_limit_memory, env=env,
                          stdin=subprocess.DEVNULL)


@pytest.fixture
def fifo(tmp_path):
    path = tmp_path / "pipe.toml"
    os.mkfifo(path)
    return path


@pytest.fixture
def zero_link(tmp_path):
    path = tmp_path / "zero.toml"
    path.symlink_to("/dev/zero")
    return path


@pytest.fixture
def random_link(tmp_path):
    path = tmp_path / "random.html"
    path.symlink_to("/dev/urandom")
    return path


def _refused_by_kind(result, path, kind):
    assert "Traceback" not in result.stderr
    assert result.returncode == 2, result.stderr
    assert result.stdout == ""
    assert result.stderr.splitlines() == [f"{path}: is not a regular file ({kind}); only regular files are read"]


@pytest.mark.parametrize("command", [("check",), ("table", "--samples", "0"), ("positions",),
                                     ("sky", "--observer", "b"), ("snapshot", "-o", "out.html")])
def test_a_named_pipe_is_refused_without_waiting(fifo, tmp_path, command):
    name, *options = command
    options = [str(tmp_path / o) if o.endswith(".html") else o for o in options]
    _refused_by_kind(run_limited(name, fifo, *options), fifo, "a named pipe")
    assert not (tmp_path / "out.html").exists()


@pytest.mark.parametrize("command", ["check", "table"])
def test_a_link_to_a_device_is_refused_without_reading_it(zero_link, command):
    _refused_by_kind(run_limited(command, zero_link), zero_link, "a character device")


def test_extract_refuses_devices_and_pipes(fifo, random_link):
    _refused_by_kind(run_limited("snapshot", "--extract", fifo), fifo, "a named pipe")
    _refused_by_kind(run_limited("snapshot", "--extract", random_link), random_link, "a character device")


def test_the_loader_refuses_special_files_in_process(fifo, zero_link):
    for path, kind in ((fifo, "a named pipe"), (zero_link, "a character device")):
        with pytest.raises(SystemFileError) as caught:
            load_system(path)
        (problem,) = caught.value.problems
        assert (problem.file, problem.field) == (str(path), "")
        assert problem.reason == f"is not a regular file ({kind}); only regular files are read"


def test_a_folder_and_a_missing_file_keep_their_plain_messages(tmp_path):
    for path, reason in ((tmp_path, "cannot be read: Is a directory"),
                         (tmp_path / "absent.toml", "cannot be read: No such file or directory")):
        with pytest.raises(SystemFileError) as caught:
            load_system(path)
        assert [p.reason for p in caught.value.problems] == [reason]


def test_a_link_to_a_regular_file_is_followed(tmp_path):
    link = tmp_path / "link.toml"
    link.symlink_to(demo_path())
    assert load_system(link).name == load_system(demo_path()).name


def test_a_file_that_reports_less_than_it_holds_is_read_only_up_to_the_limit(tmp_path, monkeypatch):
    # /proc and /sys files report a size of 0 whatever they hold; a file system may lie as well
    big = tmp_path / "big.toml"
    big.write_bytes(Path(demo_path()).read_bytes() + b"#" * (3 * MAX_FILE_BYTES) + b"\n")
    class Shrunk:
        def __init__(self, info):
            self._info = info

        def __getattr__(self, name):
            return 0 if name == "st_size" else getattr(self._info, name)

    monkeypatch.setattr(safe_io.os, "fstat", lambda fd: Shrunk(REAL_FSTAT(fd)))
    monkeypatch.setattr(safe_io.os, "stat", lambda path, *a, **k: Shrunk(REAL_STAT(path, *a, **k)))
    tracemalloc.start()
    try:
        with pytest.raises(SystemFileError) as caught:
            load_system(big)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    (problem,) = caught.value.problems
    assert problem.reason == f"holds more than {MAX_FILE_BYTES} bytes; system files are limited to {MAX_FILE_BYTES} bytes"
    assert peak < 3 * MAX_FILE_BYTES, peak  # the 6 MiB file was not read whole


def test_read_regular_file_reads_exactly_up_to_its_limit(tmp_path):
    path = tmp_path / "exact.bin"
    path.write_bytes(b"x" * 1000)
    assert read_regular_file(path, 1000) == b"x" * 1000
    with pytest.raises(SystemFileError, match="limited to 999 bytes"):
        read_regular_file(path, 999)


def test_a_file_starting_with_a_byte_order_mark_loads(tmp_path):
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + Path(demo_path()).read_bytes())
    assert load_system(path).name == load_system(demo_path()).name
