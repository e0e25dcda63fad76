# error 5:7: unknown element 'a'; 'a' is a node, and a node is written '@a'
# A node voltage is written with an @.
V1: voltage-source a -> gnd, dc 1 V
R1: resistor a -> gnd, 1 kohm
watch a.v
