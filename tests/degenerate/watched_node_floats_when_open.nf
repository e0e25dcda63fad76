# expect: '@b' is not defined in segment 2
# line: 11
# A watched node that hangs on a contact only: while the contact is open, node b has no
# path to the reference and its voltage is undefined.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> x, 1 kohm
C1: capacitor x -> gnd, 1 uF
K1: switch a -> b, closes at 0 s, opens at 1 ms
R2: resistor b -> c, 1 kohm
window 0 s .. 2 ms
watch @b
