# Bench scenario: a 24 V AC solenoid valve switched by a relay contact,
# with a freewheel resistor that takes the coil current when the contact opens.
title "Valve coil with freewheel resistor"
ground n
supply:   voltage-source l -> n, cosine 24 Vrms 50 Hz phase 0 deg
K1:       switch l -> a, closes at 0 s, opens at 35 ms, rated 3 A
coil_r:   resistor a -> b, 18 ohm
coil_l:   inductor b -> n, 120 mH, rated 2 A
free_r:   resistor a -> n, 470 ohm, rated 2 W   # (24 V)² / 470 ohm = 1.23 W while K1 is closed
watch coil_l.i, @a
sweep supply.phase -180 deg .. 180 deg
expect tau = 6.67 ms ± 1%          # contact closed: 120 mH / 18 ohm
expect tau[2] = 246 us ± 1%        # contact open: 120 mH / (18 ohm + 470 ohm)
expect peak @a < 1 kV
expect worst peak coil_l.i < 2 A
