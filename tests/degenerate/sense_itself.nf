# expect: H1 cannot sense its own current
# line: 6
# A current-controlled source whose controlling current is its own.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
H1: ccvs b -> gnd, gain 100 ohm, sense H1
C1: capacitor b -> gnd, 1 uF
