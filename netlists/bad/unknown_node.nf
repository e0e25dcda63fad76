# error 5:13: unknown node 'z'
# Node observables name nodes that elements use.
V1: voltage-source a -> gnd, dc 1 V
R1: resistor a -> gnd, 1 kohm
watch @a - @z
