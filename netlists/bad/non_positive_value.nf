# error 4:24: an inductor needs a positive inductance, found '0 H'
# Resistances, capacitances and inductances are positive.
V1: voltage-source a -> gnd, dc 5 V
L1: inductor a -> gnd, 0 H
