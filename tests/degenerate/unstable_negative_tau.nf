# expect-ok: is unstable: its time constant is negative
# line: -
# A vccs that feeds the capacitor's own voltage back with more gain than the resistor
# drains: τ = C/(G − 1/R) < 0, the response grows; valid over a short window.
V1: voltage-source a -> gnd, step 1 V at 0.1 ms
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF, initial 0 V
G1: vccs gnd -> b, gain 2 mS, sense b -> gnd
window 0 s .. 5 ms
