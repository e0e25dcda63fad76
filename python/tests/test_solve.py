"""solve: figures as plain values, waveforms as NumPy arrays on the sample grid."""
import gc
import math

import numpy as np
import pytest

import netfold
from conftest import VALVE_COIL, cli_json, run_cli

# The valve coil of netlists/valve_coil.nf: 24 Vrms 50 Hz, coil 18 ohm + 120 mH, freewheel
# 470 ohm, contact closing at 0 s (angle 0) and opening at 35 ms.
V_PEAK = 24.0 * math.sqrt(2.0)
OMEGA = 2.0 * math.pi * 50.0
R_COIL, L_COIL, R_FREE = 18.0, 0.120, 470.0
T_OPEN = 0.035


def coil_current_while_closed(t):
    """Series R-L switched onto V cos(wt) at t = 0 from rest: the steady-state phasor current
    plus the homogeneous term that makes i(0) = 0.
    (source: series RL circuit with a sinusoidal source, phasor solution plus e^(-tR/L);
    any circuit-analysis textbook, e.g. Hayt & Kemmerly, Engineering Circuit Analysis.)"""
    z = complex(R_COIL, OMEGA * L_COIL)
    i_ss = V_PEAK / abs(z)
    phi = math.atan2(OMEGA * L_COIL, R_COIL)
    return i_ss * np.cos(OMEGA * t - phi) - i_ss * math.cos(-phi) * np.exp(-t * R_COIL / L_COIL)


@pytest.fixture(scope="module")
def solution():
    return netfold.solve(netfold.parse_file(VALVE_COIL), verify=False)


def test_time_constants_are_l_over_r_with_the_contact_closed_and_open(solution):
    closed, opened = solution.segments
    # tau = L/R (source: first-order RL circuit, textbook); open: coil_r and free_r in series.
    assert closed["tau"] == pytest.approx(L_COIL / R_COIL, rel=1e-12)
    assert opened["tau"] == pytest.approx(L_COIL / (R_COIL + R_FREE), rel=1e-12)
    assert closed["rth"] == pytest.approx(R_COIL, rel=1e-12)
    assert opened["rth"] == pytest.approx(R_COIL + R_FREE, rel=1e-12)
    assert (closed["from"], closed["to"], opened["from"]) == (0.0, T_OPEN, T_OPEN)


def test_the_waveform_arrays_follow_the_phasor_solution_while_the_contact_is_closed(solution):
    t = solution.times
    i = solution.waveforms["coil_l.i"]
    assert isinstance(t, np.ndarray) and isinstance(i, np.ndarray) and t.shape == i.shape
    closed = t < T_OPEN
    expected = coil_current_while_closed(t[closed])
    assert np.max(np.abs(i[closed] - expected)) <= 1e-9 * np.max(np.abs(expected))


def test_the_spike_at_opening_is_the_coil_current_through_the_freewheel_resistor(solution):
    # At opening the coil current, continuous, flows through free_r: |v| = |i(35 ms)|·R (Ohm's law).
    spike = abs(coil_current_while_closed(np.array([T_OPEN]))[0]) * R_FREE
    figures = solution.figures["@a"]
    assert figures["peak"] == pytest.approx(spike, rel=1e-9)
    assert figures["t_peak"] == pytest.approx(T_OPEN, rel=1e-12)


def test_times_are_the_window_in_steps_of_the_resolution(solution):
    t = solution.times
    start, end = solution.window
    assert t[0] == start
    assert np.allclose(np.diff(t), solution.resolution, rtol=1e-9, atol=0)
    assert t[-1] <= end * (1 + 1e-12) and end - t[-1] < solution.resolution
    assert solution.units == {"coil_l.i": "A", "@a": "V"}
    assert solution.events == [(T_OPEN, "K1 opens")]


def test_value_evaluates_the_closed_form_at_any_times_and_keeps_the_array_shape(solution):
    t = solution.times[::400]
    grid = solution.waveforms["@a"][::400]
    assert np.allclose(solution.value("@a", t), grid, rtol=1e-12, atol=1e-12 * np.max(np.abs(grid)))
    square = solution.value("coil_l.i", t[:4].reshape(2, 2))
    assert square.shape == (2, 2)
    assert isinstance(solution.value("coil_l.i", 0.01), float)
    assert solution.value("coil_l.i", 0.01) == pytest.approx(coil_current_while_closed(np.array([0.01]))[0], rel=1e-9)


def test_an_observable_the_circuit_does_not_have_is_an_input_error(solution):
    with pytest.raises(netfold.InputError):
        solution.value("no_such.i", 0.0)


def test_the_dicts_are_the_json_of_the_command_line(solution):
    assert solution.data == cli_json("solve", VALVE_COIL, "--no-verify")
    assert solution.figures == solution.data["observables"]
    assert solution["segments"] == solution.segments


def test_the_waveforms_are_the_csv_of_the_command_line_to_the_last_digit(solution):
    rows = np.loadtxt(run_cli("solve", VALVE_COIL, "--no-verify", "--csv", "-").splitlines(), delimiter=",", skiprows=1)
    assert np.array_equal(rows[:, 0], solution.times)
    assert np.array_equal(rows[:, 1], solution.waveforms["coil_l.i"])
    assert np.array_equal(rows[:, 2], solution.waveforms["@a"])


def test_the_report_is_the_text_of_the_command_line(solution):
    assert solution.report() == run_cli("solve", VALVE_COIL, "--no-verify")
    assert "τ = L/R_th = 120 mH / 18 Ω = 6.667 ms" in solution.explain()
    assert solution.to_svg().startswith("<?xml")


def test_solve_runs_the_cross_check_by_default_as_the_command_line_does():
    checked = netfold.solve(netfold.parse_file(VALVE_COIL))
    assert checked.verification["passed"] is True
    assert checked.verification["max_rel_error"] <= checked.verification["rtol"]


def test_a_solution_keeps_its_circuit_alive():
    s = netfold.solve(netfold.parse("ground n\nV1: voltage-source a -> n, step 10 V at 0 s\n"
                                    "R1: resistor a -> b, 1 kohm\nC1: capacitor b -> n, 1 uF\n"), verify=False)
    gc.collect()
    # A 10 V step at 0 s charges C1 from 0 V: v_C(t) = 10 V·(1 − e^(−t/RC)), RC = 1 ms
    # (source: RC charging, textbook).
    assert s.value("C1.v", 1e-3) == pytest.approx(10.0 * (1.0 - math.exp(-1.0)), rel=1e-12)
    assert sorted(s.circuit.nodes) == ["a", "b", "n"]
