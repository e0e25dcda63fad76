# expect: capacitor C1 is connected straight across V1 and K1 in segment 2
# line: 7
# An ideal contact that closes a charged-up source straight onto a capacitor.
V1: voltage-source a -> gnd, dc 24 V
K1: switch a -> b, closes at 1 ms
R1: resistor b -> gnd, 1 kohm
C1: capacitor b -> gnd, 100 uF
