"""``orbitdeck evolve``: the JSON document, the text summary, progress lines, a cluster, bad options."""

from __future__ import annotations

import json
import pytest


def _strict_json(text):
    def refuse(constant):
        raise ValueError(f"{constant} is not JSON")

    return json.loads(text, parse_constant=refuse)


@pytest.fixture(scope="module")
def small_run(cli):
    result = cli.run("evolve", "--draws", "3", "--orbits", "8", "--seed", "5", "--json")
    assert result.returncode == 0, result.stderr
    return result


def test_json_has_the_promised_keys(small_run):
    doc = _strict_json(small_run.stdout)
    assert {"draws", "orbits", "seed", "stable_fraction", "stable_interval", "survival_orbits", "planets"} <= set(doc)
    assert (doc["draws"], doc["orbits"], doc["seed"]) == (3, 8, 5)
    assert len(doc["survival_orbits"]) == 3 and all(0 < s <= 8 for s in doc["survival_orbits"])
    assert len(doc["stable_interval"]) == 2
    assert doc["stable_interval"][0] <= doc["stable_fraction"] <= doc["stable_interval"][1]
    assert len(doc["planets"]) == 5
    assert all("ttv_amplitude_min" in p and "name" in p for p in doc["planets"])


def test_progress_goes_to_stderr_as_plain_lines_off_a_terminal(small_run):
    lines = small_run.stderr.splitlines()
    assert lines[0].startswith("evolve: 0 %") and lines[-1].startswith("evolve: 100 % of 8 orbits")
    assert "\r" not in small_run.stderr


def test_text_summary_says_the_numbers_are_model_estimates(cli):
    result = cli.run("evolve", "--draws", "2", "--orbits", "4")
    assert result.returncode == 0, result.stderr
    assert "stable to the end" in result.stdout
    assert "Model estimates" in result.stdout and "no general relativity" in result.stdout
    assert "TTV [min]" in result.stdout


@pytest.mark.parametrize("argv, option", [
    (["--orbits", "0"], "--orbits"), (["--orbits", "many"], "--orbits"), (["--draws", "-3"], "--draws"),
    (["--draws", "2.5"], "--draws"), (["--seed", "abc"], "--seed"), (["--seed", "-4"], "--seed"), (["--scheduler", "nowhere"], "--scheduler"),
])
def test_bad_options_are_usage_errors_naming_the_option(cli, argv, option):
    result = cli.run("evolve", *argv)
    assert result.returncode == 2
    assert option in result.stderr and "Traceback" not in result.stderr
    assert result.stdout == ""


def test_a_file_with_problems_is_refused(cli, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text('format = "orbitdeck-system/1"\n[star]\nmass = -1\n')
    result = cli.run("evolve", str(bad), "--draws", "2", "--orbits", "2")
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert str(bad) in result.stderr


def test_a_cluster_given_by_address_gives_the_same_numbers(cli, small_run):
    from distributed import LocalCluster

    # tcp, not the in-process transport, so that the command's own process can reach it
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=False, protocol="tcp",
                      dashboard_address=None) as cluster:
        result = cli.run("evolve", "--draws", "3", "--orbits", "8", "--seed", "5", "--json",
                         "--scheduler", cluster.scheduler_address)
    assert result.returncode == 0, result.stderr
    assert _strict_json(result.stdout) == _strict_json(small_run.stdout)


@pytest.mark.slow
def test_an_unreachable_scheduler_is_a_usage_error(cli):
    result = cli.run("evolve", "--draws", "2", "--orbits", "2", "--scheduler", "tcp://127.0.0.1:1")
    assert result.returncode == 2
    assert "--scheduler" in result.stderr and "Traceback" not in result.stderr


def test_text_summary_tells_when_draws_stopped(cli):
    # the eccentric demo has orbits that nearly cross: with seed 5 one of 16 draws meets a close
    # encounter within 40 orbits
    from orbitdeck.demo_systems import demo_path

    result = cli.run("evolve", str(demo_path("skew_trio")), "--draws", "16", "--orbits", "40", "--seed", "5")
    assert result.returncode == 0, result.stderr
    assert "stopped: 1 by close encounter; after" in result.stdout
