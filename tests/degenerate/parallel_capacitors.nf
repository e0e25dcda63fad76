# expect: form a loop with no resistance
# line: 7
# Two capacitors straight in parallel: their voltages cannot differ, so they are dependent
# states; this build refuses the loop and asks for the ESR that is really there.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
C2: capacitor b -> gnd, 1 uF
