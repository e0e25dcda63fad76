# error 4:43: 'rated' is given twice on C1; a capacitor takes each of these once: initial V, rated V, rated-dvdt X V/us, rated-rms X A, rated-i2t X A2s, tolerance P%
# Each attribute but a switch event is given once.
V1: voltage-source a -> gnd, dc 5 V
C1: capacitor a -> gnd, 1 uF, rated 16 V, rated 25 V
R1: resistor a -> gnd, 1 kohm
