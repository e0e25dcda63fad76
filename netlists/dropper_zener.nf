# Bench scenario: a transformerless 12 V supply for a small controller. A 470 nF X2 capacitor
# drops the mains; a 12 V zener clamps the node it feeds, and a diode charges a 220 uF reservoir
# that a 1 kohm load draws from. Plugged in at the crest of the supply, everything empty.
title "Capacitive dropper with a zener clamp"
ground n

mains:  voltage-source l -> n, cosine 230 Vrms 50 Hz     # crest at 0 s
plug:   switch l -> a, closes at 0 s
r_s:    resistor a -> b, 100 ohm, pulse-rated 5 J       # surge resistor
c_drop: capacitor b -> x, 470 nF, rated 630 V
z1:     diode n -> x, forward 0.7 V, breakdown 12 V, on 1 ohm, off 10 Mohm, rated 500 mA
d2:     diode x -> out, forward 0.7 V, on 100 mohm, off 10 Mohm, rated 30 A   # surge rating
c_res:  capacitor out -> n, 220 uF, rated 25 V
load:   resistor out -> n, 1 kohm

watch r_s.i, @out, z1.i
window 0 .. 400 ms

# At the closing instant every capacitor is empty and d2 conducts into the reservoir: by Ohm's
# law (325.27 V − 0.7 V) / (100 + 0.1 ohm) = 3.243 A, the largest current of the run.
expect peak r_s.i = 3.243 A ± 0.2%
# The reservoir cannot rise above what the clamped node and d2 allow: the zener's 12 V plus its
# 1 ohm at the few amperes of the first pulse, less the 0.7 V drop — well under 16 V.
expect peak @out < 16 V
