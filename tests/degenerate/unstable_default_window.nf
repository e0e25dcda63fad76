# expect-ok: is unstable: its time constant is negative
# line: -
# An unstable circuit with no window declared: the default window (8 |τ| after the last
# event) lets the response grow by e^8 ≈ 3000; valid, with the warning.
V1: voltage-source a -> gnd, step 1 V at 0.1 ms
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF, initial 0 V
G1: vccs gnd -> b, gain 2 mS, sense b -> gnd
