# A 24 V DC relay coil (960 ohm, 2 H) driven by a low-side transistor, modelled as a switch
# of 0.5 ohm when on. The transistor turns on at t = 0 and off at 50 ms; a 1 kohm resistor
# across the coil takes the coil current when the transistor turns off, which bounds the
# drain voltage to about 24 V + 25 mA × 1 kohm.
title "Relay coil with a flyback resistor"

V_supply:  voltage-source p -> gnd, dc 24 V
coil_r:    resistor p -> m, 960 ohm
coil_l:    inductor m -> d, 2 H
R_fly:     resistor p -> d, 1 kohm, rated 1 W   # 0.58 W while Q1 is on: it sits across the supply
Q1:        switch d -> gnd, closes at 0 s, opens at 50 ms, on 0.5 ohm, rated 100 mA

watch coil_l.i, @d
window 0 .. 70 ms
resolution 10 us

expect tau = 2.082 ms ± 1%            # 2 H / (960 ohm + 1 kohm ∥ 0.5 ohm)
expect tau[2] = 1.020 ms ± 1%         # 2 H / (960 ohm + 1 kohm)
expect rth[2] = 1.96 kohm ± 1%
expect peak @d = 48.97 V ± 1%         # 24 V + 24.97 mA × 1 kohm just after turn-off
expect final coil_l.i = 0 A ± 0.1 mA  # 20 ms ≈ 20 time constants after turn-off
