# expect: samples, more than the limit of
# line: 8
# A resolution of 1 fs over a 1 s window asks for 1e15 CSV rows: the tool must refuse it
# with a message rather than run out of memory or time.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
resolution 1 fs
window 0 s .. 1 s
