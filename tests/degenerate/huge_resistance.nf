# expect-ok:
# line: -
# A 1e300 ohm resistor: τ = 1e294 s; over a 1 s window the capacitor holds its charge.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1e300 ohm
C1: capacitor b -> gnd, 1 uF, initial 2 V
window 0 s .. 1 s
# value: C1.v 0.5 2 1e-9
