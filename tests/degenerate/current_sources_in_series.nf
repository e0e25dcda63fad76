# expect: I1 and I2 are the only connection of node m
# line: 7
# Two current sources in series with different currents: KCL at their common node fails.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
I1: current-source gnd -> m, dc 1 mA
I2: current-source m -> gnd, dc 2 mA
