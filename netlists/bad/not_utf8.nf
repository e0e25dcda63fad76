# error 3:28: the file is not text: invalid UTF-8 (byte 0xB5)
# A micro sign saved in Latin-1, where the format is UTF-8.
C1: capacitor a -> gnd, 10 µF
R1: resistor a -> gnd, 1 kohm
