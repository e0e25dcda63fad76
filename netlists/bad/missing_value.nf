# error 4:25: expected a capacitance, found 'rated'
# A capacitor needs its capacitance before any attribute.
V1: voltage-source a -> gnd, dc 5 V
C1: capacitor a -> gnd, rated 16 V
