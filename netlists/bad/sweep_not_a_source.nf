# error 5:7: 'R1.phase' sweeps the phase of an independent source, but 'R1' is a resistor
# Only an independent source has a phase to sweep.
V1: voltage-source a -> gnd, cosine 1 V 50 Hz
R1: resistor a -> gnd, 1 kohm
sweep R1.phase -90 deg .. 90 deg
