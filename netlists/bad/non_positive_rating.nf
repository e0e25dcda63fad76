# error 4:38: a rating must be positive, found '0 W'
# A rating is a limit above zero.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> gnd, 1 kohm, rated 0 W
