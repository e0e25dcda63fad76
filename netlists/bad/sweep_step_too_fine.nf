# error 6:41: a step of '0.001 deg' cuts the range of 'V1.phase' into 3.6e+05 intervals, more than the 100000 a sweep computes; give a step of at least 0.0036°
# A sweep grid holds at most 100,000 intervals (issue 12).
V1: voltage-source a -> gnd, cosine 325 V 50 Hz
R1: resistor a -> b, 10 ohm
L1: inductor b -> gnd, 30 mH
sweep V1.phase -180 deg .. 180 deg step 0.001 deg
