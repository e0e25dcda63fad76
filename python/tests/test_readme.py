"""The README's ten lines of Python run as printed, so that the README stays true."""
import contextlib
import io
import re

import numpy as np
import pytest

from conftest import SOURCE_DIR
from test_solve import T_OPEN, coil_current_while_closed


def test_the_readme_python_example_runs_and_prints_what_its_comments_say():
    readme = (SOURCE_DIR / "README.md").read_text(encoding="utf-8")
    (code,) = re.findall(r"```python\n(.*?)```", readme, re.S)
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        exec(compile(code, "README.md", "exec"), {})
    first, second, third = out.getvalue().splitlines()
    tau, peak = map(float, first.split())
    assert tau == pytest.approx(0.120 / 18.0, rel=1e-12)  # L/R (source: RL time constant, textbook)
    # The largest |i| while the contact is closed, from the phasor solution on a fine grid.
    fine = np.abs(coil_current_while_closed(np.linspace(0.0, T_OPEN, 350001)))
    assert peak == pytest.approx(fine.max(), rel=1e-8)
    passed, rth = second.split()
    assert passed == "True" and float(rth) == pytest.approx(488.0, rel=1e-12)  # 18 + 470 ohm in series
    assert third.startswith("<string> 1 24 '470 nF' is a capacitance")
