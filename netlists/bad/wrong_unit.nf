# error 4:28: '470 nF' is a capacitance, but a resistor needs a resistance
# A capacitance written where a resistance belongs.
V1:     voltage-source a -> gnd, dc 5 V
free_r: resistor a -> gnd, 470 nF
