# expect: C2 is a second storage element (C1 at line 6 is the first
# line: 8
# netfold solves circuits with one capacitor or inductor.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
R2: resistor b -> c, 1 kohm
C2: capacitor c -> gnd, 1 uF
