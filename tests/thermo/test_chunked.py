"""Chunked writing: a NetCDF grid file written block by block equals the one written whole.

No published numbers here: the reference is the project's own whole-window file
(thermo.io.save of thermo.sweep), compared variable by variable, attribute by attribute, both
decoded and as stored (``decode_cf=False``: dtypes, fill values, the bool flags' encoding).
The windows are choices, small enough for the tests; only ``created`` (the time of the run)
may differ.
"""

from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import thermo
from thermo import io
from thermo.chunked import AxisPart, block_scenario, blocks, split_axis, sweep_to_netcdf
from thermo.sweep import sweep

WINDOW = dict(temperature=("700 degC", "950 degC", 9), pressure=("10 bar", "40 bar", 7),
              steam_to_carbon=(1.0, 5.0, 5))


def _open(path, decode: bool) -> xr.Dataset:
    ds = xr.load_dataset(path, engine="netcdf4", decode_cf=decode)
    ds.attrs.pop("created")
    return ds


def _assert_same_file(chunked, whole) -> None:
    for decode in (True, False):
        xr.testing.assert_identical(_open(chunked, decode), _open(whole, decode))


@pytest.fixture(scope="module")
def demo():
    return thermo.load_scenario().with_window(**WINDOW)


@pytest.fixture(scope="module")
def whole_file(demo, tmp_path_factory):
    return io.save(sweep(demo), tmp_path_factory.mktemp("whole") / "whole.nc")


def test_blocks_split_pressure_and_cover_it(demo):
    """Blocks split the pressure axis (not temperature, not the last axis) into consecutive
    ranges covering it once, and a block's pressures are the whole axis's bit for bit."""
    assert split_axis(demo) == "pressure"
    spans = blocks(demo, block_points=2 * 9 * 5)
    assert spans == [(0, 2), (2, 4), (4, 6), (6, 7)]
    whole = demo.window.pressure.values()
    for lo, hi in spans:
        part = block_scenario(demo, lo, hi).window.pressure
        assert isinstance(part, AxisPart)
        assert np.array_equal(part.values(), whole[lo:hi])


@pytest.mark.parametrize("block_points", [45, 2 * 9 * 5, 10**6])
def test_file_written_block_by_block_equals_the_whole_file(demo, whole_file, tmp_path,
                                                            block_points):
    """Blocks of one pressure, of two, and one block for all: the same file as written whole
    (every variable, coordinate, attribute and encoding)."""
    out = tmp_path / "chunked.nc"
    info = sweep_to_netcdf(demo, out, block_points=block_points)
    _assert_same_file(out, whole_file)
    assert info["points"] == 9 * 7 * 5
    assert info["not_converged"] == int((~io.load(whole_file)["converged"]).sum())
    assert sorted(p.name for p in tmp_path.iterdir()) == ["chunked.nc"]


def test_blocks_from_dask_workers_in_any_order_equal_the_whole_file(demo, whole_file,
                                                                     tmp_path):
    """Blocks solved on two local dask workers arrive in any order; the file is the same."""
    pytest.importorskip("dask.distributed")
    out = tmp_path / "chunked.nc"
    sweep_to_netcdf(demo, out, workers=2, block_points=45)
    _assert_same_file(out, whole_file)


def test_cofeed_window_splits_pressure_and_equals_the_whole_file(tmp_path):
    """With a co-feed axis (last), blocks still split pressure; inlet flows (no pressure axis)
    are written once."""
    sc = thermo.load_scenario().with_window(temperature=("750 degC", "900 degC", 5),
                                            pressure=("15 bar", "30 bar", 3),
                                            steam_to_carbon=(2.0, 4.0, 3),
                                            co2_to_carbon=(0.0, 0.5, 3))
    whole = io.save(sweep(sc), tmp_path / "whole.nc")
    out = tmp_path / "chunked.nc"
    sweep_to_netcdf(sc, out, block_points=5 * 3 * 3)
    _assert_same_file(out, whole)


def test_interrupted_chunked_write_keeps_the_previous_file(demo, tmp_path, monkeypatch):
    """An error after some blocks are written leaves the previous file byte for byte and no
    temporary file."""
    import thermo.chunked as chunked

    target = tmp_path / "grid.nc"
    target.write_bytes(b"an earlier grid file\n")
    calls = []
    real = chunked.solve_block

    def failing(scenario, lo, hi):
        calls.append(lo)
        if len(calls) == 3:
            raise KeyboardInterrupt
        return real(scenario, lo, hi)

    monkeypatch.setattr(chunked, "solve_block", failing)
    with pytest.raises(KeyboardInterrupt):
        sweep_to_netcdf(demo, target, block_points=45)
    assert target.read_bytes() == b"an earlier grid file\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["grid.nc"]


def test_plant_window_equals_the_whole_file_but_the_interpolated_dew_point(tmp_path):
    """With a [plant] table one variable is not bit for bit: the process gas dew point comes
    from thermo.steam.saturation_temperature, which, for more pressures than its grid, reads
    IAPWS-IF97 on a grid spanning the pressures it is given (stated there to reproduce IF97
    within 3e-3 K), so a block's grid differs from the whole window's. Every other variable
    and attribute is identical, apart from the plant figures that follow from it (to 1e-14
    relative)."""
    sc = thermo.load_scenario("scenarios/hydrogen-plant.toml")
    whole = io.save(sweep(sc), tmp_path / "whole.nc")
    out = tmp_path / "chunked.nc"
    sweep_to_netcdf(sc, out, block_points=sc.window.size() // 5)
    a, b = _open(out, True), _open(whole, True)
    assert a.attrs == b.attrs
    plant = [k for k in a.data_vars if k.startswith("plant_") or k in (
        "process_gas_dew_point", "radiant_efficiency", "specific_energy",
        "natural_gas_per_h2", "steam_export_per_h2")]
    xr.testing.assert_identical(a.drop_vars(plant), b.drop_vars(plant))
    np.testing.assert_allclose(a["process_gas_dew_point"], b["process_gas_dew_point"],
                               rtol=0, atol=3e-3)
    for k in plant:
        assert a[k].attrs == b[k].attrs
        if k != "process_gas_dew_point":
            np.testing.assert_allclose(a[k], b[k], rtol=1e-14, atol=0)
