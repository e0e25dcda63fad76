# expect-ok: K1's event at 20 ms is at or after the end of the window (10 ms); it is ignored
# line: -
# An event after the declared window changes nothing inside it.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
K1: switch b -> c, closes at 0 s, opens at 20 ms
C1: capacitor c -> gnd, 1 uF
window 0 s .. 10 ms
