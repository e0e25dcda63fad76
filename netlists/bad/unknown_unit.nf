# error 4:27: unknown unit 'x' in '470x'
# Letters glued to a number must be a unit.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> gnd, 470x
