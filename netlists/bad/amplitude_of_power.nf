# error 5:18: 'amplitude' is not defined for a power: 'R1.p' has no steady-state fundamental to measure
# A power has no steady-state fundamental amplitude.
V1: voltage-source a -> gnd, cosine 1 V 50 Hz
R1: resistor a -> gnd, 1 kohm
expect amplitude R1.p < 1 W
