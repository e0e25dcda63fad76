# error 4:22: '1e-310 ohm' for a resistor is too small to compute with
# A value below the smallest normal double (2.2e-308): its digits are lost (issue 12).
V1: voltage-source a -> gnd, dc 12 V
R1: resistor a -> b, 1e-310 ohm
C1: capacitor b -> gnd, 10 uF
