"""Parsing files and strings, and bad input as netfold.InputError with its position."""
import pathlib
import re

import pytest

import netfold
from conftest import SOURCE_DIR, VALVE_COIL


def test_a_file_parses_into_a_circuit_with_its_title_nodes_watches_and_sweeps():
    c = netfold.parse_file(VALVE_COIL)
    assert c.path == VALVE_COIL
    assert c.title == "Valve coil with freewheel resistor"
    assert sorted(c.nodes) == ["a", "b", "l", "n"]
    assert c.watches == ["coil_l.i", "@a"]
    assert c.sweeps == ["supply.phase"]
    kinds = {e["name"]: e["kind"] for e in c.elements}
    assert kinds == {"supply": "voltage-source", "K1": "switch", "coil_r": "resistor",
                     "coil_l": "inductor", "free_r": "resistor"}


def test_a_path_object_is_accepted_as_a_file_name():
    assert netfold.parse_file(pathlib.Path(VALVE_COIL)).title == "Valve coil with freewheel resistor"


def test_a_string_parses_with_values_in_si_units():
    c = netfold.parse("ground n\nV1: voltage-source a -> n, dc 5 V\nC1: capacitor a -> n, 470 nF\n")
    assert c.path == "<string>"
    value = {e["name"]: e["value"] for e in c.elements}["C1"]
    assert value == pytest.approx(470e-9, rel=1e-15)  # n = 1e-9 (SI prefix; docs/netlist-format.md)
    assert {e["name"]: (e["first"], e["second"]) for e in c.elements}["C1"] == ("a", "n")


def test_a_wrong_unit_in_a_string_is_an_input_error_at_its_line_and_column():
    text = "ground n\nV1: voltage-source a -> n, dc 5 V\nR1: resistor a -> n, 470 nF\n"
    with pytest.raises(netfold.InputError) as caught:
        netfold.parse(text, path="divider.nf")
    e = caught.value
    # The value starts after "R1: resistor a -> n, " (21 characters): column 22 of line 3.
    assert (e.path, e.line, e.column) == ("divider.nf", 3, 22)
    assert "capacitance" in e.message and "resistance" in e.message
    assert str(e).startswith("divider.nf:3:22: error: ")
    assert e.exit_code == 2
    assert e.diagnostics[0]["line_text"] == "R1: resistor a -> n, 470 nF"


def test_input_errors_are_netfold_errors_and_python_exceptions():
    assert issubclass(netfold.InputError, netfold.Error)
    assert issubclass(netfold.NumericError, netfold.Error)
    assert issubclass(netfold.Error, Exception)


def test_a_missing_file_is_an_input_error_naming_the_file_without_a_position():
    with pytest.raises(netfold.InputError) as caught:
        netfold.parse_file("netlists/no_such_circuit.nf")
    assert "netlists/no_such_circuit.nf" in caught.value.message
    assert (caught.value.line, caught.value.column) == (None, None)


def gallery():
    for path in sorted((SOURCE_DIR / "netlists" / "bad").glob("*.nf")):
        header = path.read_bytes().split(b"\n", 1)[0].decode("utf-8")
        m = re.match(r"# error (\d+):(\d+): (.*)$", header)
        assert m, f"{path.name}: no '# error L:C: TEXT' first line"
        yield pytest.param(path, int(m[1]), int(m[2]), m[3], id=path.stem)


@pytest.mark.parametrize("path,line,column,text", gallery())
def test_every_file_of_the_error_gallery_is_refused_where_its_first_line_says(path, line, column, text):
    relative = str(path.relative_to(SOURCE_DIR))
    with pytest.raises(netfold.InputError) as caught:
        netfold.solve(netfold.parse_file(relative), verify=False)
    e = caught.value
    assert (e.line, e.column) == ((line or None), (column or None))
    assert e.path == relative
    assert text in e.message
