# Bench scenario: a contactor connects a 10 ohm resistive load through a 31.83 mH line
# reactor to a supply whose voltage carries 3rd and 5th harmonics (325 V peak at 50 Hz,
# 30 V at 150 Hz, 15 V at 250 Hz). At 50 Hz the reactor is 10 ohm, so X/R = 1.
title "Line reactor on a supply with harmonics"
ground n

supply:    voltage-source l -> n, cosine 325 V 50 Hz + sine 30 V 150 Hz phase 90 deg + cosine 15 V 250 Hz phase 180 deg
K1:        switch l -> a, closes at 0 s, rated 63 A
L_line:    inductor a -> b, 31.83 mH, rated 50 A
R_load:    resistor b -> n, 10 ohm

watch L_line.i, @b
resolution 100 us
golden-tolerance 0.001 %            # harmonic_supply.golden.csv must match within 1e-5 of each column's peak
sweep supply.phase -180 deg .. 180 deg step 10 deg

expect tau = 3.183 ms ± 0.5%          # 31.83 mH / 10 ohm
expect rth = 10 ohm ± 0.1%            # the supply shorted: the load alone
expect amplitude L_line.i = 22.98 A ± 0.5%   # fundamental: 325 V / √(10² + 10²) ohm = 325 V / 14.14 ohm
expect phase L_line.i = -45 deg ± 0.2 deg    # the current lags by atan(X/R) = atan(10 ohm / 10 ohm)
expect amplitude @b = 229.8 V ± 0.5%  # 22.98 A × 10 ohm
expect peak L_line.i < 48.5 A         # at most twice the sum of the harmonic currents: 2 × (22.98 + 30/31.6 + 15/51.0) A
expect worst peak L_line.i < 48.5 A   # the same bound holds for any closing angle
expect vth = 340 V ± 0.1%             # inductor open, no load current: the supply at 0 s, 325 V + 30 V × sin(90°) + 15 V × cos(180°)
