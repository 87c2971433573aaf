"""Hostile scenario files are refused with a short message naming what is wrong, without a
traceback. How long each refusal takes is measured in tests/benchmarks/bench_hostile.py
(against a plain parse of the demo scenario in the same run), never asserted here."""

from __future__ import annotations

import pytest

from explorer.cli import main
from thermo.errors import InputError
from thermo.scenario import DEMO_PATH, MAX_SCENARIO_BYTES, MAX_TEXT_CHARS, parse_scenario

BASE = DEMO_PATH.read_text("utf-8")


#: (scenario text, words its message must hold) of each hostile file; ids in HOSTILE_IDS.
HOSTILE_CASES = [
    (BASE + "\nextra = " + "{ a = " * 5000 + "1" + " }" * 5000 + "\n", "nested too deeply"),
    (BASE.replace('title = "', 'title = "' + "x" * (MAX_TEXT_CHARS + 1), 1), "title"),
    ("# padding\n" * (MAX_SCENARIO_BYTES // 10 + 1) + BASE, "bytes"),
    (BASE.replace("points = 26", "points = 100000"), "window.temperature.points"),
    (BASE.replace("points = 26", "points = 400").replace("points = 13", "points = 400")
     .replace("points = 17", "points = 400"), "window"),
    (BASE + "\n[limits.more]\nx = [" + ",".join(["1"] * 200_000) + "]\n", "limits.more"),
]
HOSTILE_IDS = ["deep-nesting", "huge-title", "huge-file", "huge-axis", "huge-window", "huge-array"]


@pytest.mark.parametrize(("text", "named"), HOSTILE_CASES, ids=HOSTILE_IDS)
def test_hostile_scenario_is_refused_with_a_short_message(text, named):
    """parse_scenario raises InputError whose message names the offending part and stays
    under 600 characters (it never echoes the huge value)."""
    with pytest.raises(InputError) as err:
        parse_scenario(text)
    assert named in str(err.value)
    assert len(str(err.value)) < 600


def test_huge_file_is_refused_by_the_cli_before_reading(tmp_path, capsys):
    """explorer point on a file above MAX_SCENARIO_BYTES exits 2 with one line saying 'at most'
    and no traceback."""
    big = tmp_path / "big.toml"
    big.write_text("# x\n" * (MAX_SCENARIO_BYTES // 4 + 10), "utf-8")
    assert main(["point", str(big)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "at most" in err and "Traceback" not in err


def test_app_refuses_a_window_too_large_for_a_session():
    """A window above APP_MAX_POINTS is refused for an app session with a message pointing to
    explorer grid."""
    from explorer.state import APP_MAX_POINTS, check_window_size
    from thermo import load_scenario

    sc = load_scenario().with_window(temperature=("700 degC", "950 degC", 200),
                                     pressure=("10 bar", "40 bar", 100),
                                     steam_to_carbon=(1.0, 5.0, 20))
    assert sc.window.size() > APP_MAX_POINTS
    with pytest.raises(InputError, match="explorer grid"):
        check_window_size(sc)


def test_review_file_refuses_a_window_too_large_for_one_process(tmp_path, capsys):
    """explorer export of a window above APP_MAX_POINTS exits 2 with one line naming the
    window and pointing to explorer grid, and writes no file (the window limit of scenario
    files is higher because explorer grid writes block by block)."""
    from thermo import load_scenario

    sc = load_scenario().with_window(temperature=("700 degC", "950 degC", 200),
                                     pressure=("10 bar", "40 bar", 100),
                                     steam_to_carbon=(1.0, 5.0, 20))
    path = tmp_path / "large.toml"
    path.write_text(sc.to_toml(), "utf-8")
    out = tmp_path / "review.html"
    assert main(["export", str(path), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert "window" in err and "a review file" in err and "explorer grid" in err
    assert "Traceback" not in err and not out.exists()
