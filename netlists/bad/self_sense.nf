# error 5:34: F1 cannot sense its own current
# A current-controlled source senses another element.
V1: voltage-source a -> gnd, dc 1 V
R1: resistor a -> gnd, 1 kohm
F1: cccs gnd -> a, gain 2, sense F1
