# expect: node c is on a part of the circuit (R2 and V2) with no path to the reference
# line: 11
# A watched node on a sub-network with no path to the reference.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
R2: resistor c -> d, 1 kohm
V2: voltage-source c -> d, dc 1 V
window 0 s .. 5 ms
# the observable that cannot be given a value:
watch C1.v, @c
