# expect: is 1e-297 s (R_th = 1 kΩ with C1 = 1e-300 F), far below anything that can be resolved
# line: 7
# A 1e-300 F capacitor behind 1 kohm: τ = 1e-297 s, below anything a double resolves beside a
# 2 ms window; refused with the advice to model the real series resistance.
V1: voltage-source a -> gnd, step 5 V at 1 ms
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1e-300 F
window 0 s .. 2 ms
