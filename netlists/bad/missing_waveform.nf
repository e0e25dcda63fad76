# error 3:30: expected a waveform (dc, cosine, sine or step), found '5 V'; a constant is written 'dc 5 V'
# A source value is a waveform, even when it is constant.
V1: voltage-source a -> gnd, 5 V
R1: resistor a -> gnd, 1 kohm
