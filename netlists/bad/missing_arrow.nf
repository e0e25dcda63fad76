# error 4:16: expected '->' between the two nodes of R1, found 'gnd'
# The two nodes of an element are joined by an arrow.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a gnd, 1 kohm
