# error 5:18: expected a tolerance after '= 1 ms', such as '± 1%', found end of line
# An equality between computed numbers needs a tolerance.
R1: resistor a -> gnd, 1 kohm
C1: capacitor a -> gnd, 1 uF
expect tau = 1 ms
