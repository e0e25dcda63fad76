# expect: switch K1 never changes state
# line: 6
# A switch with no event is a resistor in disguise.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
K1: switch b -> c, on 1 ohm
C1: capacitor c -> gnd, 1 uF
