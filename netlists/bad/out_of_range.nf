# error 3:24: '1e999' is out of range
# A number beyond the range of a double.
R1: resistor a -> gnd, 1e999
