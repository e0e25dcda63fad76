# error 6:18: 'golden-tolerance' must be below 1 (100 %), found '100 %'
# At 100 % of each column's peak a golden file of zeros passes every waveform (issue 12).
V1: voltage-source a -> gnd, dc 12 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 10 uF
golden-tolerance 100 %
