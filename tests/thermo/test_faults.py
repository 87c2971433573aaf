"""Faults: a dask worker killed mid-sweep, and writes interrupted at the worst moment."""

from __future__ import annotations

import os
import signal
import threading

import numpy as np
import pytest
import xarray as xr

import thermo
from thermo import io
from thermo.sweep import sweep

distributed = pytest.importorskip("dask.distributed")

WINDOW = dict(temperature=("700 degC", "950 degC", 12), pressure=("10 bar", "40 bar", 5),
              steam_to_carbon=(1.0, 5.0, 6))


@pytest.fixture(scope="module")
def scenario():
    return thermo.load_scenario().with_window(**WINDOW)


def _run_with_timeout(fn, seconds=240):
    box = {}

    def target():
        try:
            box["value"] = fn()
        except BaseException as err:  # reported to the test
            box["error"] = err

    t = threading.Thread(target=target, daemon=True)
    t.start()
    t.join(seconds)
    assert not t.is_alive(), "sweep hung"
    if "error" in box:
        raise box["error"]
    return box["value"]


def test_worker_killed_mid_sweep_still_gives_the_complete_result(scenario):
    """With one dask worker killed by SIGKILL after the first chunk, the sweep completes,
    converged everywhere, equal to the in-process sweep (1e-9)."""
    reference = sweep(scenario)
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                       host="127.0.0.1", dashboard_address=None)
    try:
        killed = []

        def kill_one(done, total):
            # After the first chunk comes back, kill one worker's process outright.
            if not killed:
                with distributed.Client(cluster.scheduler_address) as c:
                    victim = sorted(c.scheduler_info()["workers"])[0]
                    pid = c.run(os.getpid, workers=[victim])[victim]
                os.kill(pid, signal.SIGKILL)
                killed.append(pid)

        ds = _run_with_timeout(lambda: sweep(scenario, scheduler=cluster.scheduler_address,
                                             chunk_points=20, progress=kill_one))
    finally:
        cluster.close()
    assert killed
    for k in ("mole_fraction", "carbon_deposit", "duty", "h2_yield"):
        np.testing.assert_allclose(ds[k].values, reference[k].values, rtol=1e-9, atol=0)
    assert bool(ds["converged"].all())


def test_no_workers_left_is_a_clear_error_and_no_file(scenario, tmp_path):
    """explorer grid on a scheduler that is gone exits 2 and writes neither the grid nor a
    temporary file."""
    from explorer.cli import main

    cluster = distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True,
                                       host="127.0.0.1", dashboard_address=None)
    address = cluster.scheduler_address
    cluster.close()  # the scheduler is gone before the sweep starts
    path = tmp_path / "s.toml"
    path.write_text(scenario.to_toml(), "utf-8")
    out = tmp_path / "grid.nc"
    code = _run_with_timeout(lambda: main(["grid", str(path), "-o", str(out),
                                           "--scheduler", address]))
    assert code == 2
    assert not out.exists()
    assert not list(tmp_path.glob("*.part"))


def test_interrupted_grid_write_keeps_the_previous_file(scenario, tmp_path, monkeypatch):
    """Ctrl+C in the middle of a grid write leaves the previous file byte for byte and no
    temporary file."""
    ds = sweep(scenario)
    target = io.save(ds, tmp_path / "grid.nc")
    before = target.read_bytes()

    def broken(self, path, *args, **kwargs):
        with open(path, "wb") as fh:
            fh.write(b"\x89HDF partial")
        raise KeyboardInterrupt  # the user pressed Ctrl+C in the middle of the write

    monkeypatch.setattr(xr.Dataset, "to_netcdf", broken)
    with pytest.raises(KeyboardInterrupt):
        io.save(ds, target)
    assert target.read_bytes() == before
    assert not list(tmp_path.glob("*.part"))
