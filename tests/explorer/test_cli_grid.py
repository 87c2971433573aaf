"""The `explorer grid` command: writes a readable grid file; user errors are one line, exit 2.

No published numbers here: the window is a choice (5 x 3 x 4 = 60 points, small enough to
solve in well under a second) and the exit status 2 is the DESIGN.md CLI contract.
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
    out_path = tmp_path / "g.nc"
    code, out, err = run(capsys, "grid", scenario_file, "-o", out_path)
    assert code == 0, err
    assert out_path.is_file()
    ds = io.load(out_path)
    sizes = dict(ds.sizes)
    # The exact feasible intervals of each row add an `interval` dimension (thermo.edges).
    assert sizes.pop("interval") >= 1
    assert sizes == {"temperature": 5, "pressure": 3, "steam_to_carbon": 4, "species": 10}
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
    target = tmp_path / "g.nc"
    code, out, err = run(capsys, "grid", scenario_file, "-o", target, *argv)
    assert_one_line_error(code, err, *names)
    assert not target.exists()


def test_missing_output_option_is_a_user_error(capsys, scenario_file, monkeypatch):
    # sys.argv as the console script would see it (explorer.cli echoes sys.argv[1:]).
    monkeypatch.setattr("sys.argv", ["explorer", "grid", str(scenario_file)])
    code, out, err = run(capsys, "grid", scenario_file)
    assert_one_line_error(code, err, "-o")


def test_output_in_a_missing_folder_is_a_user_error(capsys, tmp_path, scenario_file):
    target = tmp_path / "no-such-folder" / "g.nc"
    code, out, err = run(capsys, "grid", scenario_file, "-o", target)
    assert_one_line_error(code, err, "-o")
    assert not target.parent.exists()


def test_unreachable_scheduler_leaves_the_previous_file(capsys, tmp_path, scenario_file):
    """Port 9 (discard) has no dask scheduler; the client gives up after its 20 s timeout,
    so this test takes about 20 s."""
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
    target = tmp_path / "g.nc"
    target.write_bytes(b"an earlier grid file\n")
    code, out, err = run(capsys, "grid", scenario_file, "-o", target, "--workers", "0")
    assert_one_line_error(code, err, "--workers")
    assert target.read_bytes() == b"an earlier grid file\n"


def test_usage_error_quotes_the_arguments_given_to_main(capsys, scenario_file, monkeypatch):
    monkeypatch.setattr("sys.argv", ["host-program", "--host-option"])
    code, out, err = run(capsys, "grid", scenario_file)
    assert_one_line_error(code, err, "-o")
    assert "--host-option" not in err
