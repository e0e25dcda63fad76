V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1e-300 ohm
C1: capacitor b -> gnd, 1 uF
