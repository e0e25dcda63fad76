# expect: the controlled sources F1 and F2 make them degenerate
# line: 6
# Two current-controlled current sources in series that each sense the other, with gains
# whose product is exactly 1: the loop current is undetermined.
V1: voltage-source a -> gnd, dc 5 V
F1: cccs a -> m, gain 1, sense F2
F2: cccs m -> gnd, gain 1, sense F1
R1: resistor m -> gnd, 1 kohm
R2: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
