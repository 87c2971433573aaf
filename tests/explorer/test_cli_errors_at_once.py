"""The CLI reports every invalid field of a scenario at once, one line per field, and the
distributed route without its extra ends in one line; both exit with status 2."""

from __future__ import annotations

import builtins

from explorer.cli import main
from tests.thermo.test_schema import _bad_demo


def test_three_bad_fields_give_three_lines_and_status_2(tmp_path, capsys):
    path = tmp_path / "bad.toml"
    path.write_text(_bad_demo(), "utf-8")
    code = main(["point", str(path)])
    out, err = capsys.readouterr()
    assert code == 2 and out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 3, err
    assert "Traceback" not in err
    for line, field, typed in zip(lines, ("feed.composition.C2H8", "design_point.temperature",
                                          "window.steam_to_carbon.points"),
                                  ("0.009", "'880 degX'", "= 0 "), strict=True):
        assert line.startswith("explorer: error: ") and field in line and typed in line
    assert "did you mean 'C3H8'" in lines[0]


def test_workers_without_dask_is_one_line_saying_what_to_install(tmp_path, capsys,
                                                                 monkeypatch):
    real_import = builtins.__import__

    def no_dask(name, *args, **kwargs):
        if name == "dask" or name.startswith("dask."):
            raise ImportError(f"No module named {name!r}")
        return real_import(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", no_dask)
    import importlib

    real_module = importlib.import_module

    def no_dask_module(name, *args, **kwargs):
        if name == "dask" or name.startswith("dask."):
            raise ImportError(f"No module named {name!r}")
        return real_module(name, *args, **kwargs)

    monkeypatch.setattr(importlib, "import_module", no_dask_module)
    code = main(["grid", "-o", str(tmp_path / "g.nc"), "--workers", "2"])
    out, err = capsys.readouterr()
    assert code == 2
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    assert 'pip install -e ".[dask]"' in err and "--workers" in err
    assert not (tmp_path / "g.nc").exists()
