# error 6:8: '1e15 s' is beyond 1e9 s (about 30 years), the longest time netfold computes with
# A window far beyond any time scale double precision can resolve (issue 12).
V1: voltage-source a -> gnd, dc 12 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 10 uF
window 1e15 s .. 2e15 s
