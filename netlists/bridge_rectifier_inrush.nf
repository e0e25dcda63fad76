# Bench scenario: a 230 V 50 Hz supply switched onto a bridge rectifier with a 220 uF bulk
# capacitor, through a 4.7 ohm inrush resistor and a fuse modelled by its cold resistance. The
# worst closing instant is the supply's crest onto the empty capacitor; the sweep looks for it
# over the whole cycle, with the mains within its 10 % tolerance.
title "Bridge rectifier inrush at switch-on"
ground n

mains:  voltage-source l -> n, cosine 230 Vrms 50 Hz, tolerance 10%   # crest at 0 s
K1:     switch l -> a, closes at 0 s, rated 100 A
fuse:   resistor a -> b, 150 mohm, rated-i2t 20 A2s    # melting I²t assumed for the example
r_in:   resistor b -> c, 4.7 ohm, pulse-rated 40 J
d1:     diode c -> p, forward 0.9 V, on 20 mohm, off 10 Mohm, rated 600 V, rated 150 A   # d2..d4 alike
d2:     diode m -> c, forward 0.9 V, on 20 mohm, off 10 Mohm
d3:     diode n -> p, forward 0.9 V, on 20 mohm, off 10 Mohm
d4:     diode m -> n, forward 0.9 V, on 20 mohm, off 10 Mohm
bulk:   capacitor p -> m, 220 uF, rated 400 V
load:   resistor p -> m, 1 kohm

watch fuse.i, bulk.v
window 0 .. 100 ms
sweep mains.phase -180 deg .. 180 deg step 15 deg

# Closed at the crest onto the empty capacitor, two diodes conduct at once: by Ohm's law the
# first current is (325.27 V − 2·0.9 V) / (0.15 + 4.7 + 2·0.02 ohm) = 66.15 A, the largest of
# the run (the capacitor's voltage then rises faster than the supply's).
expect peak fuse.i = 66.15 A ± 0.2%
# The capacitor can never charge beyond the crest less the two diodes' drops (323.5 V).
expect peak bulk.v < 323.5 V
# With the mains 10 % high and the worst closing angle, the same relation gives
# (357.80 V − 1.8 V) / 4.89 ohm = 72.80 A.
expect worst peak fuse.i = 72.80 A ± 0.5%
