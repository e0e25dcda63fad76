# expect-ok: resolution
# line: -
# A 1 MHz source sampled every 250 µs (the default resolution of a 1 s window): the CSV
# and the plot alias the sinusoid into a slow wave that is not there. The figures come from
# the closed form and are right; the report should say that the samples cannot show it.
V1: voltage-source a -> gnd, cosine 1 V 1 MHz
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 nF
window 0 s .. 1 s
