# expect-ok:
# line: -
# A 1e300 F capacitor behind 1 kohm: τ = 1e303 s, a perfect hold over the window.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1e300 F, initial 1 V
window 0 s .. 10 s
# value: C1.v 5 1 1e-9
