# error 5:12: segments are numbered from 1, found '0'
# Segments are numbered from 1.
R1: resistor a -> gnd, 1 kohm
C1: capacitor a -> gnd, 1 uF
expect tau[0] = 1 ms ± 1%
