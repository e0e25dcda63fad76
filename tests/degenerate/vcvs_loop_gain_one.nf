# expect: the controlled sources E1 and E2 make them degenerate
# line: 8
# Two voltage-controlled voltage sources that each copy the other's output (loop gain
# exactly 1): any common voltage satisfies both, so the network has no unique solution.
V1: voltage-source in -> gnd, dc 1 V
R1: resistor in -> x, 1 kohm
C1: capacitor x -> gnd, 1 uF
E1: vcvs a -> gnd, gain 1, sense b -> gnd
E2: vcvs b -> gnd, gain 1, sense a -> gnd
R2: resistor a -> x, 1 kohm
