# error 5:46: switch events must come in time order: '5 ms' is not after '10 ms'
# Events are written in time order.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor b -> gnd, 1 kohm
K1: switch a -> b, closes at 10 ms, opens at 5 ms
