# error 3:33: '12 Vrms' is an rms value; rms applies only to the amplitude of a cosine or sine, not to 'dc' on a voltage-source
# A DC level has no rms value distinct from itself.
V1: voltage-source a -> gnd, dc 12 Vrms
R1: resistor a -> gnd, 1 kohm
