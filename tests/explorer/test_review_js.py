"""The review file's number formatting equals Python's, digit for digit.

The page assembles a clicked point's balance itself; its numbers must read exactly as the
app's (Python) tables do. The formatting functions of explorer/review.js run under Node.js
(installed on the project's machines) on values that include exact binary ties and values
whose shortest decimal form ends in 5.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
from importlib import resources

import numpy as np
import pytest

NODE = shutil.which("node")


def _functions() -> str:
    js = resources.files("explorer").joinpath("review.js").read_text("utf-8")
    out = []
    for name in ("pyFixed", "pyG"):
        m = re.search(rf"^function {name}\(.*?^}}\n", js, flags=re.S | re.M)
        assert m, name
        out.append(m.group(0))
    return "\n".join(out)


def _values() -> list[float]:
    rng = np.random.default_rng(5)
    vals = list(rng.lognormal(0, 6, 1500) * rng.choice([-1, 1], 1500))
    vals += [2.675, 0.125, 0.375, 2.5, 3.5, -1234.5, 1024.0625, 0.5, -0.125, 0.0, 1e-7,
             123456.789, 99.995, 0.0449999999999999, 1.0005, 5e-5, 206.2, -41.15]
    return [float(v) for v in vals]


@pytest.mark.skipif(NODE is None, reason="Node.js is not installed")
@pytest.mark.parametrize("digits", [0, 1, 2, 3, 4])
def test_fixed_formatting_matches_python(digits):
    vals = _values()
    script = (_functions() + f"\nconst vals = {json.dumps(vals)};\n"
              f"console.log(JSON.stringify(vals.map((v) => pyFixed(v, {digits}))));")
    out = json.loads(subprocess.run([NODE, "-e", script], capture_output=True, text=True,
                                    timeout=60, check=True).stdout)
    assert out == [f"{v:,.{digits}f}" for v in vals]


@pytest.mark.skipif(NODE is None, reason="Node.js is not installed")
@pytest.mark.parametrize("precision", [3, 5])
def test_general_formatting_matches_python(precision):
    vals = [v for v in _values() if v != 0.0]
    script = (_functions() + f"\nconst vals = {json.dumps(vals)};\n"
              f"console.log(JSON.stringify(vals.map((v) => pyG(v, {precision}))));")
    out = json.loads(subprocess.run([NODE, "-e", script], capture_output=True, text=True,
                                    timeout=60, check=True).stdout)
    want = [f"{v:.{precision}g}" for v in vals]
    bad = [(v, o, w) for v, o, w in zip(vals, out, want, strict=True) if o != w]
    assert not bad, bad[:5]
