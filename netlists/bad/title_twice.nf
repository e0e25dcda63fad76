# error 5:1: 'title' may be given only once; it is already given on line 3
# A file has one title.
title "first"
R1: resistor a -> gnd, 1 kohm
title "second"
