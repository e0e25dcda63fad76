# error 5:40: 'off' needs a positive resistance, found '0 ohm'
# An open switch that conducts perfectly would be a short.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor b -> gnd, 1 kohm
K1: switch a -> b, closes at 1 ms, off 0 ohm
