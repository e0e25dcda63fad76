# expect: the resolution 2 ms is longer than the window 0 s .. 1 ms
# line: 7
# A resolution longer than the whole window would leave the CSV with one row.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
window 0 s .. 1 ms
resolution 2 ms
