# error 5:1: switch K1 never changes state: give it a 'closes at' or 'opens at' event, or replace it by a resistor
# A switch without events is a resistor in disguise.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor b -> gnd, 1 kohm
K1: switch a -> b, on 0.1 ohm
