# A 10 µF capacitor bank fed from 230 V, 50 Hz through a 10 ohm damping resistor and a
# contact. The contact closes at t = 0, opens at 12 ms and recloses 5 ms later, when the
# capacitor still holds almost all of its charge (its 100 kohm bleeder needs about a second).
# The sweeps look for the worst moment to close and the worst charge left on the capacitor.
title "Capacitor bank reclosing on a charged capacitor"
ground n

supply:   voltage-source l -> n, cosine 230 Vrms 50 Hz
K1:       switch l -> a, closes at 0 s, opens at 12 ms, closes at 17 ms, rated 80 A
R_damp:   resistor a -> b, 10 ohm, pulse-rated 50 J
C1:       capacitor b -> n, 10 uF, rated 400 V
R_bleed:  resistor b -> n, 100 kohm

watch C1.v, K1.i
sweep supply.phase -180 deg .. 180 deg step 15 deg
sweep C1.initial -325 V .. 325 V step 65 V
sweep K1.closes 0 ms .. 10 ms step 1 ms

expect tau = 99.99 us ± 1%        # contact closed: 10 µF × (10 ohm ∥ 100 kohm)
expect tau[2] = 1 s ± 1%          # contact open: 10 µF × 100 kohm
expect rth[2] = 100 kohm ± 1%
expect tau[3] = 99.99 us ± 1%     # reclosed
expect peak K1.i < 70 A           # at most 2 × 325 V across 10 ohm, plus 1 A of steady current
