# error 5:35: K1 already closes at 0 s; its events must alternate between 'closes at' and 'opens at'
# A switch that is already closed cannot close again.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor b -> gnd, 1 kohm
K1: switch a -> b, closes at 0 s, closes at 5 ms
