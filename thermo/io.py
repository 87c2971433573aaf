"""Grid files: NetCDF write (atomic) and read (schema-checked)."""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

import xarray as xr

from thermo.errors import InputError
from thermo.sweep import SCHEMA_VERSION


def publish(tmp: str | os.PathLike, path: str | os.PathLike) -> None:
    """Give a finished temporary file the usual permissions and rename it over `path`.

    Temporary files are created private (0600); the published file gets what the user's
    umask gives a new file (typically 0644), so a review file can be shared as it is.
    """
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp, 0o666 & ~umask)
    os.replace(tmp, path)


@contextlib.contextmanager
def atomic_target(path: str | os.PathLike, field: str = "output"):
    """Yield a temporary path beside `path`; on success publish it as `path`, else remove it.

    Whatever happens inside (an exception, Ctrl+C), an earlier file at `path` stays intact and
    no half file is left.

    Raises
    ------
    InputError
        The folder of `path` does not exist.
    """
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(field, str(path), "a file in an existing folder")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=folder)
    os.close(fd)
    try:
        yield Path(tmp)
        publish(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise


def save(ds: xr.Dataset, path: str | os.PathLike) -> Path:
    """Write `ds` to NetCDF at `path` atomically (see :func:`atomic_target`).

    Parameters
    ----------
    ds : xarray.Dataset
        A sweep result.
    path : path-like
        Target file (``.nc``).

    Returns
    -------
    pathlib.Path
        The path written.
    """
    with atomic_target(path) as tmp:
        ds.to_netcdf(tmp, engine="netcdf4")
    return Path(path)


def load(path: str | os.PathLike) -> xr.Dataset:
    """Read a grid file written by :func:`save`, refusing another schema version.

    Raises
    ------
    InputError
        The file is missing, unreadable, or of another schema version (re-run the sweep).
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("grid file", str(path), "an existing NetCDF file")
    try:
        ds = xr.load_dataset(path, engine="netcdf4")
    except (OSError, ValueError) as err:
        raise InputError("grid file", str(path), f"a readable NetCDF file ({err})") from None
    version = ds.attrs.get("schema_version")
    if version != SCHEMA_VERSION:
        raise InputError(
            "grid file", str(path),
            f"schema version {SCHEMA_VERSION} (this file has {version!r}); re-run the sweep "
            "with 'explorer grid'",
        )
    for name in ("converged", "feasible", "carbon_free", "carbon_higher_hydrocarbons",
                 "carbon_other_stage"):
        if name in ds:
            ds[name] = ds[name].astype(bool)
    return ds
