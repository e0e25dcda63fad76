# error 6:25: a sweep range must rise: '-5 V' is not above '5 V'
# A sweep range runs upward.
V1: voltage-source a -> gnd, dc 1 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
sweep C1.initial 5 V .. -5 V
