# error 5:19: both ends of R2 are node 'a'; an element connects two different nodes
# An element between a node and itself.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> gnd, 1 kohm
R2: resistor a -> a, 1 kohm
