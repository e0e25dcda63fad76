# expect: is the only connection of node n
# line: 8
# A current source that feeds a node with no other path: its voltage would be unbounded.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
# the source pushes 1 mA into node n, and nothing takes it out:
I1: current-source gnd -> n, dc 1 mA
