# expect: capacitor C1 is connected straight across V1
# line: 6
# A capacitor directly across an ideal voltage source: nothing limits its charging current.
V1: voltage-source a -> gnd, step 5 V at 1 ms
R1: resistor a -> gnd, 1 kohm
C1: capacitor a -> gnd, 1 uF
