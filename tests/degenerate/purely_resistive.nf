# expect-ok: purely resistive
# line: -
# No capacitor or inductor: each segment is its DC/AC steady state.
V1: voltage-source a -> gnd, cosine 10 V 50 Hz
R1: resistor a -> b, 1 kohm
R2: resistor b -> gnd, 1 kohm
K1: switch b -> gnd, closes at 10 ms, on 1 kohm
watch @b
# value: @b 0.005 0 1e-9
