# error 3:7: unterminated string: it needs a closing '"' on the same line
# A title is quoted on one line.
title "Valve coil
R1: resistor a -> gnd, 1 kohm
