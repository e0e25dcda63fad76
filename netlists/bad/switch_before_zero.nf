# error 5:30: a switch event cannot happen before t = 0, found '-1 ms'
# The state before t = 0 is given by the first event, not by an event before t = 0.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor b -> gnd, 1 kohm
K1: switch a -> b, closes at -1 ms
