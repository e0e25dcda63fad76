# error 0:0: no element connects to the reference node 'gnd'; connect one, or name the reference with 'ground NODE'
# Without a ground statement the reference is gnd, which nothing here touches.
V1: voltage-source a -> b, dc 1 V
R1: resistor a -> b, 1 kohm
