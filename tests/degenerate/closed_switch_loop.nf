# expect: closed switches K2 and K1 form a loop with no resistance
# line: 7
# Two ideal contacts in parallel, both closed: how the current divides between them is
# undefined.
V1: voltage-source a -> gnd, dc 5 V
K1: switch a -> b, closes at 0 s
K2: switch a -> b, closes at 0 s
R1: resistor b -> c, 1 kohm
C1: capacitor c -> gnd, 1 uF
