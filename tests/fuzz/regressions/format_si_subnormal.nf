V1: voltage-source a -> gnd, cosine 1 V 1e-300 Hz
R1: resistor a -> b, 1e300 ohm
C1: capacitor b -> gnd, 1 uF

