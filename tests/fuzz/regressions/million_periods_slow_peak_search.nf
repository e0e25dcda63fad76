#  tjat the samples cannot show it.
V1: voltage-source a -> gnd, cosine 1 V 1 MHz
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 nF
window 0 s .. 1 s
