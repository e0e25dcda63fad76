# error 5:1: duplicate element name 'R1': the first 'R1' is on line 4
# Element names are unique.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> gnd, 1 kohm
R1: resistor a -> gnd, 2 kohm
