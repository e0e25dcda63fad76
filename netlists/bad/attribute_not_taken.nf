# error 4:32: a resistor takes no attribute 'initial'; its attributes are: rated P W, pulse-rated E J, rated-i2t X A2s, tolerance P%
# Only storage elements have an initial state.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> gnd, 1 kohm, initial 2 V
