# error 4:42: expected ',' or end of line, found 'rated'
# Attributes are separated by commas.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> gnd, 1 kohm, rated 1 W rated 2 W
