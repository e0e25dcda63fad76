V1: voltage-source a -> gnd, sine 1e300 V 5 Hz
R1: resistor a -> b, 1 ohm
C1: capacitor b -> gnd, 1 F
