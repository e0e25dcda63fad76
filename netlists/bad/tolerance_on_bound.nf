# error 5:21: a tolerance goes only with '='; '<' is already a bound
# A bound needs no tolerance.
R1: resistor a -> gnd, 1 kohm
C1: capacitor a -> gnd, 1 uF
expect tau < 1.1 ms ± 1%
