# error 5:1: vccs G1 needs 'sense NODE -> NODE'
# A controlled source says what controls it.
V1: voltage-source a -> gnd, dc 1 V
R1: resistor b -> gnd, 1 kohm
G1: vccs gnd -> b, gain 1 mS
