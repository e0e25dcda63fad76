# expect-ok: C1 sees no resistance before t = 0, so its voltage there is undetermined
# line: -
# A capacitor that the contact connects only at t = 0: before that it is isolated, its
# state is undetermined, and it starts from 0 V (a network degenerate only before t = 0 is
# not an error).
V1: voltage-source a -> gnd, dc 5 V
K1: switch a -> b, closes at 0 s
R1: resistor b -> c, 1 kohm
C1: capacitor c -> gnd, 1 uF
