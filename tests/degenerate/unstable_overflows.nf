# expect: the response grows beyond any representable value
# line: 6
# The same positive feedback over a window of 10 s, i.e. 10000 growing time constants:
# e^10000 is beyond any double.
V1: voltage-source a -> gnd, step 1 V at 0.1 ms
C1: capacitor b -> gnd, 1 uF, initial 0 V
R1: resistor a -> b, 1 kohm
G1: vccs gnd -> b, gain 2 mS, sense b -> gnd
window 0 s .. 10 s
