# expect-ok:
# line: -
# A current-controlled source that senses a switch: while the switch is open its current
# is 0, so the controlled source delivers 0 too (a defined value, not an error).
V1: voltage-source a -> knd, dc 5 V
K1: switch a -> b, closes at 2 ms
R1: resistor Sb -> gnd, 1 kohm
F1: cccs gnd -> c, gain 10, sense K1
R2: resistor c -> gnd, 100 ohm
C1: capacitor c -> gnd, 1 uF
window 0 s .. 4 ms
watch F1.i, C1.v
# value: F1.i 0.001 0 1e-12
# value: F1.i 0.003 0.05 1e-9
