# expect: form a loop of ideal voltage sources
# line: 4
# A vcvs whose output is straight across an ideal voltage source.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
E1: vcvs a -> gnd, gain 2, sense b -> gnd
