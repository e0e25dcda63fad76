# Bench scenario: two identical 24 V DC relay coils (480 ohm, 0.5 H) released at 10 ms by their
# contacts. Coil 1 freewheels through a plain diode (slow release); coil 2 through a diode and a
# 33 V zener in series (fast release, at the price of a higher voltage across the contact).
title "Relay coil release: flyback diode against diode and zener"
ground n

supply:  voltage-source s -> n, dc 24 V
K1:      switch s -> a1, opens at 10 ms, rated 60 V
coil1_r: resistor a1 -> b1, 480 ohm
coil1_l: inductor b1 -> n, 500 mH
d1:      diode n -> a1, forward 0.7 V, rated 1 A, rated 100 V

K2:      switch s -> a2, opens at 10 ms, rated 60 V
coil2_r: resistor a2 -> b2, 480 ohm
coil2_l: inductor b2 -> n, 500 mH
d2:      diode m2 -> a2, forward 0.7 V, rated 1 A, rated 100 V
z2:      diode m2 -> n, breakdown 33 V, off 100 Mohm

watch coil1_l.i, coil2_l.i, K1.v, K2.v
window 0 .. 20 ms

# The coil current I0 = 24 V / 480 ohm = 50 mA decays as L·di/dt = −R·i − V_clamp and reaches
# zero after (L/R)·ln(1 + I0·R/V_clamp) (textbook, from memory): with the diode alone
# (V_clamp = 0.7 V) 1.0417 ms · ln(35.29) = 3.712 ms; with the zener (33.7 V) 0.5602 ms.
# The current is below 1 µA only 0.7 µs (diode) and 15 ns (zener) before it reaches zero.
expect time-below coil1_l.i 1 uA after 10 ms = 3.712 ms ± 0.2%
expect time-below coil2_l.i 1 uA after 10 ms = 560.2 us ± 0.2%
# The contact sees the supply plus the clamp: 24.7 V and 57.7 V.
expect peak K1.v = 24.7 V ± 0.1%
expect peak K2.v = 57.7 V ± 0.1%
