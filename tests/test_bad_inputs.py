"""Bad system files are refused clearly: by the loader and by the command line.

Every member of ``tests/data/bad`` breaks a valid document in one place;
``tests/data/bad/EXPECTED.toml`` says which field path the error must name
and a phrase of the reason. Each member is loaded in-process and run through
``orbitdeck check`` and ``orbitdeck table`` as real subprocesses.
"""

from __future__ import annotations

import importlib.util
import tomllib
import tracemalloc
from pathlib import Path

import pytest
from cli_harness import run_installed

from orbitdeck.models import SystemFileError, load_system, loads_system
from orbitdeck.models.files.system_file import MAX_FILE_BYTES

DATA = Path(__file__).resolve().parent / "data"
BAD = DATA / "bad"
EXPECTED = tomllib.loads((BAD / "EXPECTED.toml").read_text(encoding="utf-8"))
MEMBERS = sorted(p.name for p in BAD.iterdir() if p.name != "EXPECTED.toml")
#: more lines than this is not "a few"
MAX_LINES = 5


def _load_generator():
    spec = importlib.util.spec_from_file_location("make_bad_corpus", DATA / "make_bad_corpus.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


make_bad_corpus = _load_generator()


def _param(name, *rest):
    return pytest.param(name, *rest, id="-".join([name, *rest]))


def _expectations(name):
    """([(field, reason, field as shown)...], count) of a member."""
    entry = EXPECTED[name]
    expected = [(entry["field"], entry["reason"], entry.get("shown", entry["field"])),
                *[(also[0], also[1], also[2] if len(also) > 2 else also[0]) for also in entry.get("also", [])]]
    return expected, entry.get("count", 1)


COMMANDS = ("check", "table")
#: members also run through the installed entry points, compared with the forked runs
SAMPLE = ("malformed_toml.toml", "binary_garbage.bin", "many_problems.toml", "unknown_planet_key.toml")


@pytest.fixture(scope="module")
def cli_runs(cli):
    """(member, command) -> CompletedProcess of ``orbitdeck COMMAND MEMBER``, each in its own process."""
    return {(name, command): cli.run(command, BAD / name) for name in MEMBERS for command in COMMANDS}


# -- the corpus itself -------------------------------------------------------------------------

def test_corpus_is_large_and_fully_described():
    assert len(MEMBERS) >= 100
    assert set(MEMBERS) == set(EXPECTED)
    for name, entry in EXPECTED.items():
        assert set(entry) <= {"field", "reason", "shown", "count", "also"}, name
        assert entry["reason"].strip(), name
        assert entry.get("count", 1) >= 1 + len(entry.get("also", [])), name
        assert all(len(also) in (2, 3) for also in entry.get("also", [])), name


def test_text_members_say_what_is_wrong_on_their_first_line():
    for name in MEMBERS:
        data = (BAD / name).read_bytes()
        if name in make_bad_corpus.binary_members() and not data.startswith(b"# "):
            continue  # empty, whitespace-only, UTF-16, binary: no room for a comment
        first = data.split(b"\n", 1)[0].decode("ascii")
        assert first.startswith("# ") and len(first) > 10, name


def test_generated_members_match_their_generator():
    members = make_bad_corpus.binary_members()
    assert set(members) <= set(MEMBERS)
    for name, content in members.items():
        assert (BAD / name).read_bytes() == content, f"{name}: run python tests/data/make_bad_corpus.py"


def test_no_member_is_large():
    for name in MEMBERS:
        assert (BAD / name).stat().st_size < 64 * 1024, name


# -- the loader --------------------------------------------------------------------------------

def _assert_problems(problems, name, source):
    expected, count = _expectations(name)
    assert all(p.file == source for p in problems), problems
    for field, reason, shown in expected:
        assert any(p.field == field and p.where == shown and reason.casefold() in p.reason.casefold()
                   for p in problems), (
            f"{name}: expected {shown!r} ({reason!r}), got {[(p.where, p.reason) for p in problems]}")
    assert len(problems) == count, [(p.field, p.reason) for p in problems]


@pytest.mark.parametrize("name", [_param(n) for n in MEMBERS])
def test_loader_refuses_member(name):
    path = BAD / name
    with pytest.raises(SystemFileError) as caught:
        load_system(path)
    _assert_problems(caught.value.problems, name, str(path))
    # the same content given directly names the source it was given
    with pytest.raises(SystemFileError) as again:
        loads_system(path.read_bytes(), source="<upload>")
    _assert_problems(again.value.problems, name, "<upload>")


# -- the command line --------------------------------------------------------------------------

def _is_control(char: str) -> bool:
    return (ord(char) < 0x20 and char != "\n") or 0x7F <= ord(char) < 0xA0


@pytest.mark.parametrize("name,command", [_param(n, c) for n in MEMBERS for c in COMMANDS])
def test_cli_refuses_member(cli_runs, name, command):
    result = cli_runs[(name, command)]
    path = str(BAD / name)
    expected, count = _expectations(name)
    assert "Traceback" not in result.stderr
    assert result.returncode == 2, result.stderr
    assert result.stdout == ""
    lines = result.stderr.splitlines()
    assert 1 <= len(lines) <= MAX_LINES and len(lines) == count, lines
    assert all(line.startswith(f"{path}: ") for line in lines), lines
    assert not any(_is_control(c) for c in result.stderr), repr(result.stderr)
    for field, reason, shown in expected:
        prefix = f"{path}: {shown}: " if shown else f"{path}: "
        assert any(line.startswith(prefix) and reason.casefold() in line[len(prefix):].casefold()
                   for line in lines), (field, reason, lines)


@pytest.mark.parametrize("name", SAMPLE)
def test_installed_entry_points_agree_with_forked_runs(cli_runs, name):
    # the console script runs check, python -m runs table: both entry points are wired
    for command, entry in (("check", "script"), ("table", "module")):
        installed = run_installed(command, BAD / name, entry=entry)
        forked = cli_runs[(name, command)]
        assert (installed.returncode, installed.stdout, installed.stderr) == (
            forked.returncode, forked.stdout, forked.stderr), entry


@pytest.mark.parametrize("command", COMMANDS)
def test_cli_refuses_missing_file_and_folder(cli, tmp_path, command):
    for target in (tmp_path / "absent.toml", tmp_path):
        result = cli.run(command, target)
        assert result.returncode == 2 and "Traceback" not in result.stderr
        assert result.stderr.splitlines() == [f"{target}: cannot be read: "
                                              f"{'No such file or directory' if target != tmp_path else 'Is a directory'}"]


# -- size limit --------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def oversized(tmp_path_factory):
    """A 20 MB file that would load if it were parsed (never committed: made here)."""
    return make_bad_corpus.write_oversized(tmp_path_factory.mktemp("big") / "huge.toml", 20 * 1024 * 1024)


@pytest.mark.parametrize("command,entry", [("check", "script"), ("table", "module")])
def test_cli_refuses_oversized_file_by_its_size(oversized, command, entry):
    result = run_installed(command, oversized, entry=entry)
    assert result.returncode == 2 and "Traceback" not in result.stderr
    lines = result.stderr.splitlines()
    assert len(lines) == 1
    assert lines[0].startswith(f"{oversized}: ")
    assert f"{oversized.stat().st_size} bytes" in lines[0]
    assert f"limited to {MAX_FILE_BYTES} bytes" in lines[0]


def test_oversized_file_is_refused_without_being_read(oversized):
    # tracemalloc as the memory meter: reading the file would allocate its 20 MB
    tracemalloc.start()
    try:
        with pytest.raises(SystemFileError) as caught:
            load_system(oversized)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < 1024 * 1024, peak
    (problem,) = caught.value.problems
    assert problem.field == "" and str(MAX_FILE_BYTES) in problem.reason


def test_size_limit_boundary(tmp_path):
    at_limit = make_bad_corpus.write_oversized(tmp_path / "at.toml", MAX_FILE_BYTES)
    assert load_system(at_limit).planet_names == ["b", "c"]
    over = make_bad_corpus.write_oversized(tmp_path / "over.toml", MAX_FILE_BYTES + 1)
    with pytest.raises(SystemFileError, match=f"limited to {MAX_FILE_BYTES} bytes"):
        load_system(over)
    with pytest.raises(SystemFileError, match=f"limited\\s+to {MAX_FILE_BYTES} bytes"):
        loads_system(over.read_bytes())


def test_size_limit_applies_to_text_too(tmp_path):
    text = make_bad_corpus.write_oversized(tmp_path / "over.toml", MAX_FILE_BYTES + 1).read_text()
    with pytest.raises(SystemFileError, match=str(MAX_FILE_BYTES)):
        loads_system(text)


# -- what a message may print ------------------------------------------------------------------

def test_control_characters_of_keys_are_escaped(cli, tmp_path):
    path = tmp_path / "escape.toml"
    text = (BAD / "unknown_star_key.toml").read_text().replace("metallicity", '"\\u001b[2Jwiped"')
    path.write_text(text)
    result = cli.run("check", path)
    assert result.returncode == 2
    assert "\x1b" not in result.stderr
    assert "star." in result.stderr and "wiped" in result.stderr and "unknown key" in result.stderr
