"""Run the ``orbitdeck`` command line as real child processes, cheaply.

Starting the interpreter and importing astropy costs about half a second per
command, too much for a corpus of dozens of files run through several
commands. :class:`ForkedCli` starts one driver interpreter that imports the
command line once, then forks a fresh child process for every command: each
child has its own stdout, stderr and exit status, and runs the same entry
point as the console script (``orbitdeck.dashboard.cli:main``), with the
interpreter's top-level behaviour (a ``SystemExit`` sets the status, any other
exception prints a traceback and exits 1). :func:`run_installed` runs the real
installed entry points; tests compare the two on a sample to keep the forked
runner honest.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import sysconfig
import tempfile
from pathlib import Path

#: seconds a single command may take before its child is killed (a hang, not a speed target)
CHILD_TIMEOUT = 300

_DRIVER = r"""
import io, json, os, signal, sys, traceback
import orbitdeck.dashboard.cli as cli
import orbitdeck.models, orbitdeck.models.files.export, orbitdeck.models.engine.draws, orbitdeck.dashboard.text_tables

def stream(fd, like):
    return io.TextIOWrapper(io.FileIO(fd, "w", closefd=False), encoding=like.encoding, errors=like.errors)

protocol = sys.stdout
for line in sys.stdin:
    job = json.loads(line)
    pid = os.fork()
    if pid == 0:
        code = 1
        try:
            signal.alarm(job["timeout"])
            for fd, name in ((1, "out"), (2, "err")):
                target = os.open(job[name], os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
                os.dup2(target, fd)
                os.close(target)
            sys.stdout, sys.stderr = stream(1, sys.__stdout__), stream(2, sys.__stderr__)
            if job["cwd"]:
                os.chdir(job["cwd"])
            sys.argv = ["orbitdeck", *job["argv"]]
            try:
                code = cli.main(job["argv"])
            except SystemExit as error:
                code = error.code
            except BaseException:
                traceback.print_exc()
                code = 1
            if code is None:
                code = 0
            elif not isinstance(code, int):
                print(code, file=sys.stderr)
                code = 1
            sys.stdout.flush()
            sys.stderr.flush()
        finally:
            os._exit(code)
    _, status = os.waitpid(pid, 0)
    protocol.write("@@ " + json.dumps({"returncode": os.waitstatus_to_exitcode(status)}) + "\n")
    protocol.flush()
"""


def _clean_env() -> dict:
    env = {k: v for k, v in os.environ.items() if k != "ORBITDECK_DEBUG"}
    env.setdefault("OPENBLAS_NUM_THREADS", "1")
    return env


def succeeded(result: subprocess.CompletedProcess) -> subprocess.CompletedProcess:
    """``result`` after checking that the command succeeded (status 0) without a traceback."""
    assert result.returncode == 0, result.stderr
    assert "Traceback" not in result.stderr
    return result


class ForkedCli:
    """A driver interpreter that runs each ``orbitdeck`` command in a forked child."""

    def __init__(self):
        self._folder = tempfile.TemporaryDirectory(prefix="orbitdeck-cli-")
        self._driver = subprocess.Popen([sys.executable, "-c", _DRIVER], stdin=subprocess.PIPE,
                                        stdout=subprocess.PIPE, text=True, env=_clean_env())
        self._count = 0

    def run(self, *argv, cwd=None, timeout=CHILD_TIMEOUT) -> subprocess.CompletedProcess:
        """Run ``orbitdeck ARGV...`` in a fresh child; its status and output."""
        self._count += 1
        out = Path(self._folder.name) / f"{self._count}.out"
        err = Path(self._folder.name) / f"{self._count}.err"
        job = {"argv": [str(a) for a in argv], "out": str(out), "err": str(err),
               "cwd": str(cwd) if cwd else None, "timeout": timeout}
        self._driver.stdin.write(json.dumps(job) + "\n")
        self._driver.stdin.flush()
        while True:
            line = self._driver.stdout.readline()
            if not line:
                raise RuntimeError("the command-line driver exited")
            if line.startswith("@@ "):
                break
        returncode = json.loads(line[3:])["returncode"]
        read = lambda p: p.read_bytes().decode("utf-8", "backslashreplace")
        result = subprocess.CompletedProcess(["orbitdeck", *job["argv"]], returncode, read(out), read(err))
        out.unlink()
        err.unlink()
        return result

    def close(self) -> None:
        self._driver.stdin.close()
        self._driver.wait(timeout=60)
        self._folder.cleanup()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


def console_script() -> Path:
    """The installed ``orbitdeck`` entry point of this interpreter."""
    return Path(sysconfig.get_path("scripts")) / "orbitdeck"


def run_installed(*argv, entry: str = "script", cwd=None, timeout=CHILD_TIMEOUT) -> subprocess.CompletedProcess:
    """Run the installed command line: ``entry`` "script" (console script) or "module" (``-m``)."""
    head = [str(console_script())] if entry == "script" else [sys.executable, "-m", "orbitdeck.dashboard.cli"]
    return subprocess.run([*head, *map(str, argv)], capture_output=True, timeout=timeout, cwd=cwd,
                          env=_clean_env(), text=True, encoding="utf-8", errors="backslashreplace")
