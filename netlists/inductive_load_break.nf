# Bench scenario: two identical 10 ohm / 100 mH loads on one 230 V 50 Hz supply, switched off at
# 30 ms. K_arc is a real AC contact: it parts at 30 ms and its arc carries the current to the
# next zero. K_ideal interrupts at once, wherever the current is in its cycle; both have a
# 10 kohm leakage path when open (the contact's insulation and any snubber, for the example).
title "Inductive AC load broken at current zero, beside an ideal contact"
ground n

mains:    voltage-source l -> n, cosine 230 Vrms 50 Hz

K_arc:    switch l -> a1, opens at current zero after 30 ms, off 10 kohm
load1_r:  resistor a1 -> b1, 10 ohm
load1_l:  inductor b1 -> n, 100 mH

K_ideal:  switch l -> a2, opens at 30 ms, off 10 kohm
load2_r:  resistor a2 -> b2, 10 ohm
load2_l:  inductor b2 -> n, 100 mH

watch K_arc.v, K_ideal.v, load1_l.i, load2_l.i
window 0 .. 60 ms

# Broken at its current zero the coil holds no energy: the open contact sees the supply, whose
# crest is 325.3 V (common practice, no source).
expect peak K_arc.v = 325.3 V ± 0.5%
# The ideal contact breaks 3.0 A (the load current 325.27 V / 32.97 ohm = 9.866 A lags the supply
# by 72.3°, and the supply is at a crest at 30 ms: 9.866 A · cos 72.3° = 3.0 A) into 10 kohm:
# a spike of about 30 kV, which a real contact does not reach.
expect peak K_ideal.v > 25 kV
