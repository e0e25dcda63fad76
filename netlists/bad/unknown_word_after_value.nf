# error 3:27: expected ',' or end of line, found 'kOhm', which is not a unit
# Units are case-sensitive: ohm, not Ohm.
R1: resistor a -> gnd, 10 kOhm
