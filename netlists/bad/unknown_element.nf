# error 5:7: unknown element 'R9'
# Observables name elements of the circuit.
V1: voltage-source a -> gnd, dc 1 V
R1: resistor a -> gnd, 1 kohm
watch R9.i
