# error 3:42: zero frequency on a sinusoid: a constant is written 'dc LEVEL'
# A sinusoid of zero frequency is a constant.
V1: voltage-source a -> gnd, cosine 10 V 0 Hz
R1: resistor a -> gnd, 1 kohm
