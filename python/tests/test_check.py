"""check: a circuit library's claims, as counts and per-case dicts."""
import re

import netfold
from conftest import run_cli

CLAIMS = """\
src: voltage-source in -> gnd, dc 10 V
R1: resistor in -> a, 1 kohm
R2: resistor a -> gnd, 3 kohm
C1: capacitor a -> gnd, 1 uF
expect tau = 750 us ± 1%
expect tau = 1 ms ± 1%
"""


def test_check_counts_as_the_command_line_does():
    report = netfold.check(["netlists"])
    summary = run_cli("check", "netlists").splitlines()[-1]
    passed, failed = map(int, re.fullmatch(r"(\d+) passed, (\d+) failed", summary).groups())
    assert (report.passed, report.failed) == (passed, failed)
    assert report.report().splitlines()[-1] == summary
    assert sum(len(f["cases"]) for f in report.files) == passed + failed


def test_a_true_claim_passes_and_a_false_one_fails(tmp_path):
    # tau = (R1 || R2)·C = 750 us (source: Thevenin resistance of a divider, textbook).
    (tmp_path / "divider.nf").write_text(CLAIMS, encoding="utf-8")
    report = netfold.check([str(tmp_path)])
    (file,) = report.files
    claims = [c for c in file["cases"] if c["kind"] == "claim"]
    assert [c["passed"] for c in claims] == [True, False]
    assert claims[1]["location"].endswith("divider.nf:6")
    assert (report.passed, report.failed) == (len(file["cases"]) - 1, 1)
    assert "<failure" in report.junit_xml()


def test_the_shards_of_a_library_hold_every_file_once():
    every = {f["path"] for f in netfold.check(["netlists"]).files}
    first = {f["path"] for f in netfold.check(["netlists"], shard="1/2").files}
    second = {f["path"] for f in netfold.check(["netlists"], shard="2/2").files}
    assert first | second == every and not first & second
