# error 3:19: '\' continues a statement only as the last character of a line
# A backslash continues a statement only at the end of a line.
R1: resistor a -> \ gnd, 1 kohm
