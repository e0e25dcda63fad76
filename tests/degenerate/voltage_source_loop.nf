# expect: form a loop of ideal voltage sources
# line: 5
# Two ideal voltage sources in parallel at different voltages: the current that
# circulates between them is undefined.
V1: voltage-source a -> gnd, dc 5 V
V2: voltage-source a -> gnd, dc 3 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
