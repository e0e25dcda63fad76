"""worst, verify and equiv: the library's results, with grids and waveforms as arrays."""
import math

import numpy as np
import pytest

import netfold
from conftest import VALVE_COIL, cli_json, run_cli


@pytest.fixture(scope="module")
def circuit():
    return netfold.parse_file(VALVE_COIL)


def test_worst_gives_the_json_of_the_command_line_and_the_peak_over_the_grid(circuit):
    w = netfold.worst(circuit)
    assert w.data == cli_json("worst", VALVE_COIL)
    (sweep,) = w.sweeps
    assert sweep["target"] == "supply.phase"
    grid = sweep["grid"]
    assert grid.shape == (sweep["grid_points"],)
    assert grid[0] == pytest.approx(-math.pi, rel=1e-12) and grid[-1] == pytest.approx(math.pi, rel=1e-12)
    for name, result in sweep["results"].items():
        peaks = sweep["peaks"][name]
        assert peaks.shape == grid.shape
        # The refined worst case is at least the best grid point and not far above it.
        assert result["worst_peak"] >= np.max(peaks) * (1 - 1e-12)
        assert result["worst_peak"] <= np.max(peaks) * 1.01


def test_worst_takes_sweeps_as_the_command_line_writes_them(circuit):
    w = netfold.worst(circuit, sweeps=["supply.phase=0deg..90deg"])
    grid = w.sweeps[0]["grid"]
    assert grid[0] == 0.0 and grid[-1] == pytest.approx(math.pi / 2, rel=1e-12)
    with pytest.raises(netfold.InputError):
        netfold.worst(circuit, sweeps=["no_such.phase=0deg..90deg"])


def test_the_worst_report_is_the_text_of_the_command_line(circuit):
    assert netfold.worst(circuit).report() == run_cli("worst", VALVE_COIL)


def test_verify_passes_and_its_numerical_waveforms_agree_with_the_closed_form(circuit):
    v = netfold.verify(circuit)
    assert v.passed and v.max_rel_error <= v.rtol == 1e-6
    closed = v.solution.value("coil_l.i", v.times)
    numeric = v.numeric["coil_l.i"]
    assert numeric.shape == v.times.shape == closed.shape
    assert np.max(np.abs(numeric - closed)) <= 1e-6 * np.max(np.abs(closed))
    assert v.data["passed"] is True and v.data["rtol"] == 1e-6


def test_verify_of_a_solution_reuses_it_and_an_unreachable_threshold_is_a_failed_result(circuit):
    s = netfold.solve(circuit, verify=False)
    strict = netfold.verify(s, rtol=1e-30)
    assert strict.passed is False and strict.solution is s
    with pytest.raises(netfold.InputError):
        netfold.verify(s, rtol=0.0)


def test_equiv_at_the_coil_and_between_two_nodes(circuit):
    # Contact closed: the ideal source shorts free_r, the coil sees coil_r alone; open: coil_r +
    # free_r in series; between a and n with the contact open only free_r (the coil is a
    # current source, open for R_th). (source: Thevenin resistance by inspection, textbook.)
    assert netfold.equiv(circuit, at=0.010)["rth"] == pytest.approx(18.0, rel=1e-12)
    assert netfold.equiv(circuit, at=0.040)["rth"] == pytest.approx(488.0, rel=1e-12)
    port = netfold.equiv(circuit, port=("a", "n"), at=0.040)
    assert port["rth"] == pytest.approx(470.0, rel=1e-12)
    assert port.data == cli_json("equiv", VALVE_COIL, "--port", "a,n", "--at", "40ms")


def test_equiv_of_a_divider_is_its_thevenin_equivalent():
    s = netfold.solve(netfold.parse("src: voltage-source in -> gnd, dc 10 V\nR1: resistor in -> a, 1 kohm\n"
                                    "R2: resistor a -> gnd, 3 kohm\nC1: capacitor a -> gnd, 1 uF\n"), verify=False)
    eq = netfold.equiv(s)
    # R_th = R1 || R2 = 750 ohm, v_oc = 10 V · R2/(R1 + R2) = 7.5 V, tau = R_th·C = 750 us
    # (source: Thevenin's theorem on a voltage divider, textbook).
    assert eq["rth"] == pytest.approx(750.0, rel=1e-12)
    assert eq["vth_dc"] == pytest.approx(7.5, rel=1e-12)
    assert eq["tau"] == pytest.approx(750e-6, rel=1e-12)


def test_equiv_refuses_an_unknown_node_and_a_time_outside_the_window(circuit):
    with pytest.raises(netfold.InputError) as caught:
        netfold.equiv(circuit, port=("a", "zz"))
    assert "zz" in caught.value.message and caught.value.line is None
    with pytest.raises(netfold.InputError):
        netfold.equiv(circuit, at=10.0)
