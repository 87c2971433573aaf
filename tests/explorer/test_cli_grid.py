"""The `explorer grid` command: writes a readable grid file; user errors are one line, exit 2.

No published numbers here: the window is a choice (5 x 3 x 4 = 60 points, kept small for the
tests) and exit status 2 is the CLI's contract for user error (README).
"""

from __future__ import annotations

import time

import pytest

import thermo
from explorer.cli import main
from thermo import io

POINTS = 60  # 5 x 3 x 4, the window below


@pytest.fixture
def scenario_file(tmp_path):
    sc = thermo.load_scenario().with_window(temperature=("700 degC", "950 degC", 5),
                                            pressure=("10 bar", "40 bar", 3),
                                            steam_to_carbon=(1.0, 5.0, 4))
    path = tmp_path / "small.toml"
    path.write_text(sc.to_toml(), encoding="utf-8")
    return path


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def assert_one_line_error(code: int, err: str, *names: str) -> None:
    assert code == 2, err
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert "Traceback" not in err
    assert lines[0].startswith("explorer: error:"), err
    for name in names:
        assert name in lines[0], (name, err)


def test_grid_writes_a_loadable_file(capsys, tmp_path, scenario_file):
    """explorer grid writes a NetCDF file that loads with the window's sizes and the scenario as
    written, reports the point count and the path, and leaves no temporary file."""
    out_path = tmp_path / "g.nc"
    code, out, err = run(capsys, "grid", scenario_file, "-o", out_path)
    assert code == 0, err
    assert out_path.is_file()
    ds = io.load(out_path)
    # `interval`: the exact feasible intervals of each row (feasible_t_low / feasible_t_high).
    assert dict(ds.sizes) == {"temperature": 5, "pressure": 3, "steam_to_carbon": 4,
                              "species": 10, "interval": ds.sizes["interval"]}
    assert ds.sizes["interval"] >= 1
    assert thermo.parse_scenario(ds.attrs["scenario"]) == thermo.load_scenario(scenario_file)
    assert f"{POINTS} points" in out
    assert str(out_path) in out
    # Nothing but the grid file is left in the folder (no temporary *.part file).
    assert sorted(p.name for p in tmp_path.iterdir()) == ["g.nc", "small.toml"]


@pytest.mark.parametrize("argv, names", [
    (["--workers", "0"], ["--workers"]),
    (["--workers", "2", "--scheduler", "tcp://127.0.0.1:8786"], ["--workers", "--scheduler"]),
])
def test_bad_worker_options_are_user_errors(capsys, tmp_path, scenario_file, argv, names):
    """--workers 0, and --workers with --scheduler, are one-line user errors naming the
    options, and no grid file is written."""
    target = tmp_path / "g.nc"
    code, out, err = run(capsys, "grid", scenario_file, "-o", target, *argv)
    assert_one_line_error(code, err, *names)
    assert not target.exists()


def test_missing_output_option_is_a_user_error(capsys, scenario_file, monkeypatch):
    """grid without -o is a one-line user error naming -o."""
    # sys.argv as the console script would see it (explorer.cli echoes sys.argv[1:]).
    monkeypatch.setattr("sys.argv", ["explorer", "grid", str(scenario_file)])
    code, out, err = run(capsys, "grid", scenario_file)
    assert_one_line_error(code, err, "-o")


def test_output_in_a_missing_folder_is_a_user_error(capsys, tmp_path, scenario_file):
    """An output path in a missing folder is a one-line user error naming -o, and no folder is
    created."""
    target = tmp_path / "no-such-folder" / "g.nc"
    code, out, err = run(capsys, "grid", scenario_file, "-o", target)
    assert_one_line_error(code, err, "-o")
    assert not target.parent.exists()


@pytest.mark.parametrize("cluster", [[], ["--workers", "2"]])
def test_a_file_that_cannot_be_written_names_the_output_not_the_cluster(
        capsys, tmp_path, scenario_file, monkeypatch, cluster):
    """A write failure (here a full disk, raised where the file is written) is a one-line
    error naming -o and the reason, also with workers: not a report of an unreachable
    cluster."""
    import errno

    import thermo.chunked

    target = tmp_path / "g.nc"

    def full_disk(*args, **kwargs):
        raise OSError(errno.ENOSPC, "No space left on device", str(target))

    monkeypatch.setattr(thermo.chunked, "sweep_to_netcdf", full_disk)
    if cluster:
        pytest.importorskip("dask.distributed")
    code, out, err = run(capsys, "grid", scenario_file, "-o", target, *cluster)
    assert_one_line_error(code, err, "-o", "No space left on device")
    assert "cluster" not in err


def test_unreachable_scheduler_leaves_the_previous_file(capsys, tmp_path, scenario_file):
    """Port 9 (discard) has no dask scheduler: grid gives up with a one-line error naming the
    address, leaves the previous file and no temporary one, and does so within 60 s (its 20 s
    connect timeout plus slack: a hang guard, not a speed goal)."""
    pytest.importorskip("dask.distributed")
    target = tmp_path / "g.nc"
    target.write_bytes(b"an earlier grid file\n")
    start = time.monotonic()
    code, out, err = run(capsys, "grid", scenario_file, "-o", target,
                         "--scheduler", "tcp://127.0.0.1:9")
    elapsed = time.monotonic() - start
    assert_one_line_error(code, err, "--scheduler", "tcp://127.0.0.1:9")
    assert target.read_bytes() == b"an earlier grid file\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["g.nc", "small.toml"]
    # The 20 s connect timeout of thermo.sweep plus slack for a loaded machine.
    assert elapsed < 60


def test_user_error_keeps_an_existing_output_file(capsys, tmp_path, scenario_file):
    """A user error (--workers 0) leaves an existing output file byte for byte."""
    target = tmp_path / "g.nc"
    target.write_bytes(b"an earlier grid file\n")
    code, out, err = run(capsys, "grid", scenario_file, "-o", target, "--workers", "0")
    assert_one_line_error(code, err, "--workers")
    assert target.read_bytes() == b"an earlier grid file\n"


def test_usage_error_quotes_the_arguments_given_to_main(capsys, scenario_file, monkeypatch):
    """A usage error names -o and quotes only the arguments given to main, not the host program's
    sys.argv."""
    monkeypatch.setattr("sys.argv", ["host-program", "--host-option"])
    code, out, err = run(capsys, "grid", scenario_file)
    assert_one_line_error(code, err, "-o")
    assert "--host-option" not in err


def test_grid_workers_without_dask_says_what_to_install(tmp_path, monkeypatch, capsys):
    """Without dask.distributed, --workers ends in one line naming the extra, status 2."""
    import sys

    from explorer.cli import main

    monkeypatch.setitem(sys.modules, "dask.distributed", None)
    rc = main(["grid", "-o", str(tmp_path / "g.nc"), "--workers", "2"])
    err = capsys.readouterr().err.strip().splitlines()
    assert rc == 2 and len(err) == 1
    assert 'pip install -e ".[dask]"' in err[0]


def test_three_bad_fields_give_three_lines_and_status_2(tmp_path, capsys):
    """Each line names its field and quotes exactly what was typed in it."""
    from explorer.cli import main
    from thermo.scenario import DEMO_PATH

    text = DEMO_PATH.read_text()
    text = (text.replace('"540 degC"', '"5400 degC"').replace('"22 barg"', '"22 barr"')
            .replace("steam_to_carbon = 3.0", 'steam_to_carbon = "three"'))
    path = tmp_path / "bad.toml"
    path.write_text(text)
    rc = main(["point", str(path)])
    lines = capsys.readouterr().err.strip().splitlines()
    assert rc == 2 and len(lines) == 3
    for field, typed in (("feed.inlet_temperature", "'5400 degC'"),
                         ("design_point.pressure", "'22 barr'"),
                         ("feed.steam_to_carbon", "'three'")):
        assert any(line.startswith(f"explorer: error: {field} = {typed}") for line in lines)


def test_grid_on_a_cluster_started_as_the_readme_says(capsys, tmp_path, scenario_file):
    """The README's "grid on a real cluster": a scheduler (`dask scheduler`) and a worker
    (`dask worker tcp://HOST:PORT`) started as their own processes, in another folder, on
    loopback; `explorer grid --scheduler` gives the file an in-process grid gives (every
    variable equal; only the file's creation time differs), written on the client's side."""
    distributed = pytest.importorskip("distributed")
    import json
    import os
    import shutil
    import subprocess
    import sys
    from pathlib import Path

    dask_cli = shutil.which("dask", path=str(Path(sys.executable).parent)) or shutil.which("dask")
    assert dask_cli, "the dask command of the dask extra is missing"
    where = tmp_path / "cluster"
    where.mkdir()
    info = where / "scheduler.json"
    log = (where / "cluster.log").open("wb")
    procs = [subprocess.Popen([dask_cli, "scheduler", "--host", "127.0.0.1", "--port", "0",
                               "--no-dashboard", "--scheduler-file", str(info)],
                              cwd=where, stdout=log, stderr=subprocess.STDOUT)]
    try:
        deadline = time.monotonic() + 60
        while not info.is_file() and time.monotonic() < deadline:
            time.sleep(0.2)
        address = json.loads(info.read_text())["address"]
        assert address.startswith("tcp://127.0.0.1:"), address
        procs.append(subprocess.Popen([dask_cli, "worker", address, "--nthreads", "1",
                                       "--no-dashboard"], cwd=where, stdout=log,
                                      stderr=subprocess.STDOUT, env=dict(os.environ)))
        remote, local = tmp_path / "remote.nc", tmp_path / "local.nc"
        with distributed.Client(address, timeout=30) as client:
            client.wait_for_workers(1, timeout=60)
            moves = client.run_on_scheduler(lambda dask_scheduler:
                                            dask_scheduler.transition_counter)
            code, out, err = run(capsys, "grid", scenario_file, "-o", remote,
                                 "--scheduler", address)
            assert code == 0, err
            # The cluster did the work: its scheduler moved tasks through their states.
            assert client.run_on_scheduler(lambda dask_scheduler:
                                           dask_scheduler.transition_counter) > moves
        code, out, err = run(capsys, "grid", scenario_file, "-o", local)
        assert code == 0, err
    finally:
        for p in reversed(procs):
            p.terminate()
        for p in reversed(procs):
            p.wait(timeout=30)
        log.close()
    a, b = io.load(remote), io.load(local)
    assert sorted(a.data_vars) == sorted(b.data_vars)
    for v in a.data_vars:
        assert a[v].equals(b[v]), v
    assert {k: v for k, v in a.attrs.items() if k != "created"} == \
        {k: v for k, v in b.attrs.items() if k != "created"}
    assert not any(where.glob("*.nc"))  # the file is written by the client, not the worker
