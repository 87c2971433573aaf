"""Command line: ``explorer point | best | grid | serve | export``.

User errors print one line to stderr and exit with status 2; no traceback.
"""

from __future__ import annotations

import argparse
import importlib
import json
import sys

from thermo.errors import InputError, all_errors

EXIT_USER_ERROR = 2


class _Parser(argparse.ArgumentParser):
    """argparse that reports a usage error as one line and exit status 2."""

    argv: list[str] = []

    def error(self, message: str):  # noqa: D102 - argparse hook
        raise InputError("command line", " ".join(_Parser.argv), message)


def _kernel_notice(points: int, background: bool = False) -> None:
    """Say what happens on a machine where the equilibrium kernel is not compiled yet.

    A call of up to ``thermo.equilibrium.INTERPRETED_POINTS`` points (a single point, its
    adiabatic stages) runs the interpreted kernel at once; a window compiles the kernel first
    (numba, once per machine: about 20 s on an idle 2-core machine, twice that under load), or,
    with `background`, compiles it in a child process while the interpreted kernel solves.
    """
    from thermo import equilibrium as eq

    if eq.kernel_is_loaded() or eq.kernel_is_cached():
        return
    if background:
        eq.start_background_build()
        msg = ("compiling the equilibrium kernel for this machine in the background (first "
               "run only, about 20-40 s; cached afterwards); until it is ready, windows are "
               "solved by the interpreted kernel: the same results, about 1-3 ms per point")
    elif points <= eq.INTERPRETED_POINTS:
        msg = ("the compiled equilibrium kernel is not built on this machine yet; solving "
               "with the interpreted kernel (the same results, a few ms per point). The first "
               "'explorer grid', 'export' or 'serve' compiles it once (about 20-40 s)")
    else:
        msg = ("compiling the equilibrium kernel for this machine (first run only, about "
               "20-40 s; cached afterwards) ...")
    print(f"explorer: {msg}", file=sys.stderr, flush=True)


def _cmd_point(args: argparse.Namespace) -> int:
    import thermo
    from explorer.report import point_report
    from thermo.scenario import POINT_OVERRIDES, validate_point_overrides

    sc = thermo.load_scenario(args.scenario)
    # Every option checked at once (one line per bad option), named as typed.
    options = {name: BY_OPTION[path] for name, path in POINT_OVERRIDES.items()}
    validate_point_overrides(options, **{name: getattr(args, name) for name in options})
    _kernel_notice(1)
    pt = thermo.point(
        sc,
        temperature=args.temperature,
        pressure=args.pressure,
        steam_to_carbon=args.steam_to_carbon,
        feed=args.feed,
        oxygen_to_carbon=args.oxygen_to_carbon,
        co2_to_carbon=args.co2_to_carbon,
        inlet_temperature=args.inlet_temperature,
        approach=args.approach,
        adiabatic=args.adiabatic,
    )
    m = thermo.margins(sc, point=pt)
    if args.json:
        d = pt.to_dict()
        d["margins"] = m.to_dict()
        d["sensitivities"] = m.sensitivities_dict()
        print(json.dumps(d, indent=2, allow_nan=False))
    else:
        from explorer.limits_report import margins_text

        units = _units(args, sc)
        print(point_report(pt, units) + "\n\n" + margins_text(m, units))
    return 0


def _cmd_best(args: argparse.Namespace) -> int:
    import thermo
    from explorer.limits_report import best_text
    from thermo.edges import objective

    sc = thermo.load_scenario(args.scenario)
    obj = objective(args.objective, sc)
    _kernel_notice(sc.window.size())
    bar = _progress_bar(sc.window.size(), "solving window")
    try:
        ds = thermo.sweep(sc, progress=lambda done, total: bar.update(done - bar.n))
    finally:
        bar.close()
    bp = thermo.best_point(sc, obj.name, ds=ds)
    if args.json:
        print(json.dumps(bp.to_dict(), indent=2, allow_nan=False))
    else:
        print(best_text(bp, _units(args, sc)))
    return 0


def _cmd_grid(args: argparse.Namespace) -> int:
    import thermo
    from thermo.chunked import sweep_to_netcdf

    if args.workers is not None and args.scheduler is not None:
        raise InputError("--workers", args.workers, "either --workers or --scheduler, not both")
    if args.workers is not None and not 1 <= args.workers <= 256:
        raise InputError("--workers", args.workers, "a number of worker processes from 1 to 256")
    if args.workers is not None or args.scheduler is not None:
        try:
            importlib.import_module("dask.distributed")
        except ImportError:
            option = "--scheduler" if args.scheduler else "--workers"
            raise InputError(option, args.scheduler or args.workers,
                             'the dask extra for distributed sweeps: pip install -e ".[dask]" '
                             "(or leave the option out to solve in this process)") from None
    sc = thermo.load_scenario(args.scenario)
    out = _output_path(args.output, ".nc")
    n = sc.window.size()
    if args.workers is None and args.scheduler is None:
        _kernel_notice(n)
    bar = _progress_bar(n, "solving window")
    try:
        # Block by block into the file: no process holds the whole window (thermo.chunked).
        info = sweep_to_netcdf(sc, out, workers=args.workers, scheduler=args.scheduler,
                               progress=lambda done, total: bar.update(done - bar.n))
    except OSError as err:
        if err.filename is not None or (args.workers is None and args.scheduler is None):
            # The file could not be written (a full disk, a folder gone): not the cluster.
            raise InputError("-o", str(out), "a file that can be written "
                             f"({err.strerror or err})") from None
        where = args.scheduler or f"{args.workers} local workers"  # cluster unreachable
        raise InputError("--scheduler" if args.scheduler else "--workers", where,
                         f"a reachable dask cluster ({err})") from None
    finally:
        bar.close()
    bad = info["not_converged"]
    print(f"wrote {out}: {n} points, {info['sizes']}; "
          f"{bad} not converged" + (" (flagged in 'converged')" if bad else ""))
    return 0


def _load_proposal(path: str | None, base):
    """The --compare scenario, moved onto the base's window (errors name --compare)."""
    if path is None:
        return None
    import thermo
    from thermo.compare import on_base_window

    try:
        return on_base_window(base, thermo.load_scenario(path))
    except InputError as err:
        raise InputError(f"--compare {path}: {err.field}", err.value, err.allowed) from None


def _cmd_export(args: argparse.Namespace) -> int:
    import thermo
    from explorer.export import write_review
    from explorer.state import check_window_size
    from thermo.sweep import sweep

    sc = check_window_size(thermo.load_scenario(args.scenario), "a review file")
    proposal = _load_proposal(args.compare, sc)
    out = _output_path(args.output, ".html")
    _kernel_notice(sc.window.size())
    runs = [("base" if proposal else "window", sc)] + ([("proposal", proposal)]
                                                      if proposal else [])
    grids = []
    for what, scenario in runs:
        bar = _progress_bar(scenario.window.size(), f"solving {what}")
        try:
            grids.append(sweep(scenario, progress=lambda done, total, b=bar: b.update(done - b.n)))
        finally:
            bar.close()
    write_review(sc, out, grids[0], proposal=proposal,
                 proposal_ds=grids[1] if proposal else None, units=_units(args, sc))
    size = out.stat().st_size / 1e6
    what = f"comparison with {args.compare}" if proposal else "review file"
    print(f"wrote {out}: {what} for {sc.window.size()} grid points, {size:.1f} MB, "
          "works offline")
    return 0


def _units(args: argparse.Namespace, sc) -> str:
    """The display unit system: --units, else the scenario's [display] units, else metric
    (explorer.display; --json output stays SI whatever the system)."""
    return args.units or getattr(sc, "display_units", "metric")


def _add_units_option(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--units", choices=("metric", "us"), default=None,
                        help="display units: metric (degC, bar, kmol/h, Nm3/h, MW) or us "
                             "(degF, psia, lbmol/h, MMSCFD at 60 degF and 14.696 psia, "
                             "MMBtu/h); default: the scenario's, else metric")


def _output_path(text: str, suffix: str):
    from pathlib import Path

    path = Path(text)
    if path.is_dir():
        raise InputError("-o", text, f"a file name ending in {suffix}, not a folder")
    if not path.parent.is_dir():
        raise InputError("-o", text, "a file in an existing folder")
    return path


def _progress_bar(total: int, what: str):
    from tqdm import tqdm

    return tqdm(total=total, desc=what, unit="pt", unit_scale=True, file=sys.stderr,
                mininterval=0.5, delay=1.0, leave=False)


def _cmd_serve(args: argparse.Namespace) -> int:
    import ipaddress

    import thermo
    from explorer.state import check_window_size

    # Errors in the files show here, before serving.
    sc = check_window_size(thermo.load_scenario(args.scenario))
    proposal = _load_proposal(args.compare, sc)
    if not 1 <= args.port <= 65535:
        raise InputError("--port", args.port, "a port number from 1 to 65535")
    try:
        loopback = ipaddress.ip_address(args.address).is_loopback
    except ValueError:
        raise InputError("--address", args.address, "an IP address such as 127.0.0.1") from None
    if not loopback:
        print(f"explorer: warning: serving on {args.address}: anyone who can reach this "
              "address can use the app. Bind 127.0.0.1 unless you mean to share it.",
              file=sys.stderr)
    if not 1 <= args.max_sessions <= 1000:
        raise InputError("--max-sessions", args.max_sessions,
                         "a number of live pages from 1 to 1000")
    if not 1 <= args.idle_minutes <= 7 * 24 * 60:
        raise InputError("--idle-minutes", args.idle_minutes,
                         "minutes from 1 to 10080 (one week)")
    _kernel_notice(sc.window.size(), background=True)
    from explorer import server
    from explorer.state import SHARED_CACHE

    origin = [f"{args.address}:{args.port}"]
    if loopback:
        origin.append(f"localhost:{args.port}")
    print(f"explorer: solving {sc.title!r} ({sc.window.size():,} points) before serving ...",
          file=sys.stderr, flush=True)
    # Solved once here, so that every page (the first too) adopts it from the shared cache.
    SHARED_CACHE.get(sc)
    if proposal is not None:
        SHARED_CACHE.get(proposal)
    print(f"explorer: serving {sc.title!r} at http://{args.address}:{args.port}/ "
          f"(at most {args.max_sessions} pages at once; idle pages released after "
          f"{args.idle_minutes:g} min; Ctrl+C to stop)", file=sys.stderr, flush=True)
    server.serve(sc, proposal, port=args.port, address=args.address, websocket_origin=origin,
                 max_sessions=args.max_sessions, idle_minutes=args.idle_minutes,
                 units=_units(args, sc))
    return 0


def _override_keys():
    """The schema's keys that `explorer point` options override (thermo.schema, `option`)."""
    from thermo.schema import KEYS

    return [k for k in KEYS if k.option]


def build_parser() -> argparse.ArgumentParser:
    """The ``explorer`` argument parser."""
    p = _Parser(
        prog="explorer",
        description="Operating-window explorer for steam reformers: equilibrium outlet, "
        "carbon limit and balances over temperature, pressure and steam-to-carbon.",
    )
    sub = p.add_subparsers(dest="command", required=True, parser_class=_Parser)

    pt = sub.add_parser("point", help="equilibrium outlet and full balance at one point")
    pt.add_argument("scenario", nargs="?", default=None,
                    help="scenario TOML file (default: the shipped demo)")
    for key in _override_keys():
        pt.add_argument(key.option, default=None,
                        help=f"overrides {key.path}: {key.help[0].lower()}{key.help[1:]}")
    pt.add_argument("--adiabatic", action="store_true",
                    help="solve the outlet temperature at zero duty")
    pt.add_argument("--json", action="store_true", help="print one strict JSON object (SI)")
    _add_units_option(pt)
    pt.set_defaults(func=_cmd_point)

    from thermo.edges import DEFAULT_OBJECTIVE, OBJECTIVES

    bs = sub.add_parser("best", help="the best feasible point of the window for an objective, "
                                     "with its balance and margins")
    bs.add_argument("scenario", nargs="?", default=None,
                    help="scenario TOML file (default: the shipped demo)")
    bs.add_argument("--objective", default=None,
                    help="what to make best: " + ", ".join(
                        f"{k} ({o.label})" for k, o in OBJECTIVES.items())
                    + f" (default {DEFAULT_OBJECTIVE}; specific_energy with a [plant] table)")
    bs.add_argument("--json", action="store_true", help="print one strict JSON object (SI)")
    _add_units_option(bs)
    bs.set_defaults(func=_cmd_best)

    gr = sub.add_parser("grid", help="solve the whole window and write a NetCDF grid file")
    gr.add_argument("scenario", nargs="?", default=None,
                    help="scenario TOML file (default: the shipped demo)")
    gr.add_argument("-o", "--output", required=True, help="NetCDF file to write, e.g. grid.nc")
    gr.add_argument("--workers", type=int, default=None,
                    help="solve on N local dask worker processes")
    gr.add_argument("--scheduler", default=None,
                    help="address of a running dask.distributed scheduler, e.g. tcp://host:8786")
    gr.set_defaults(func=_cmd_grid)

    ex = sub.add_parser("export", help="write the offline review file (one HTML page)")
    ex.add_argument("scenario", nargs="?", default=None,
                    help="scenario TOML file (default: the shipped demo)")
    ex.add_argument("-o", "--output", required=True, help="HTML file to write, e.g. review.html")
    _add_units_option(ex)
    ex.add_argument("--compare", default=None, metavar="PROPOSAL",
                    help="a proposal scenario to compare with SCENARIO (the base): maps of "
                         "both and of the change, over the base's window")
    ex.set_defaults(func=_cmd_export)

    sv = sub.add_parser("serve", help="open the explorer in a browser (local server)")
    sv.add_argument("scenario", nargs="?", default=None,
                    help="scenario TOML file (default: the shipped demo)")
    sv.add_argument("--port", type=int, default=5006, help="port (default 5006)")
    _add_units_option(sv)
    sv.add_argument("--address", default="127.0.0.1",
                    help="address to bind (default 127.0.0.1: this machine only)")
    sv.add_argument("--compare", default=None, metavar="PROPOSAL",
                    help="open with a proposal scenario loaded for comparison")
    from explorer.server import DEFAULT_IDLE_MINUTES, DEFAULT_MAX_SESSIONS

    sv.add_argument("--max-sessions", type=int, default=DEFAULT_MAX_SESSIONS, metavar="N",
                    help="most pages served at once; past it a short 'busy' page answers "
                         "(default %(default)s)")
    sv.add_argument("--idle-minutes", type=float, default=DEFAULT_IDLE_MINUTES, metavar="MIN",
                    help="release a page after this many minutes without use "
                         "(default %(default)s)")
    sv.set_defaults(func=_cmd_serve)
    return p


#: Option of each overridden key path (the schema's `option` column).
BY_OPTION = {k.path: k.option for k in _override_keys()}
_OPTION_NAMES = {"objective": "--objective"}


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``explorer`` console script; returns the exit status."""
    _Parser.argv = list(sys.argv[1:] if argv is None else argv)
    try:
        args = build_parser().parse_args(argv)
        return args.func(args)
    except InputError as err:
        # One line per refused field (a scenario with several bad fields lists them all).
        for e in all_errors(err):
            msg = str(e)
            if e.field in _OPTION_NAMES:
                msg = msg.replace(e.field, _OPTION_NAMES[e.field], 1)
            print(f"explorer: error: {msg}", file=sys.stderr)
        return EXIT_USER_ERROR
    except KeyboardInterrupt:
        print("explorer: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":
    sys.exit(main())
