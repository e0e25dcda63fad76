# Bench scenario: a 24 V DC relay coil (0.5 H, 480 ohm, 50 mA) driven through a contact that
# opens at 1 ms. An RC snubber (470 ohm + 100 nF) across the coil takes the coil current
# when the contact opens, so the coil's stored energy rings down in the series loop
# coil – snubber instead of arcing across the contact.
title "RC snubber across a DC relay coil as the contact opens"

supply:  voltage-source p -> gnd, dc 24 V
K1:      switch p -> a, opens at 1 ms, rated 1 A, rated 200 V
R_coil:  resistor a -> m, 480 ohm
L_coil:  inductor m -> gnd, 0.5 H, rated 100 mA
R_s:     resistor a -> s, 470 ohm, pulse-rated 10 mJ
C_s:     capacitor s -> gnd, 100 nF, rated 250 V

watch @a, K1.v, L_coil.i, C_s.v
window 0 .. 10 ms

# Contact closed: coil and snubber are each across the supply: L/R_coil = 1.042 ms and
# R_s·C_s = 47 µs; the slowest is the coil's.
expect tau = 1.042 ms ± 0.5%
# Contact open: the series loop L_coil, R_coil + R_s = 950 ohm, C_s (textbook series RLC):
# α = R/(2L) = 950 /s, τ = 1/α = 1.053 ms; ζ = (R/2)·√(C/L) = 0.2124;
# f_d = √(1/(LC) − α²)/(2π) = 695.5 Hz.
expect tau[2] = 1.053 ms ± 0.5%
expect damping[2] = 0.2124 ± 0.5%
expect frequency[2] = 695.5 Hz ± 0.5%
# Just after opening the coil's 50 mA flows back through the snubber: @a = 24 V − 470 × 0.05 A.
expect @a at 1 ms = 0.5 V ± 1%
# The coil's ½·L·i² = 625 µJ plus the snubber's ½·C·(24 V)² = 29 µJ is at most enough for
# √(2 × 654 µJ / 100 nF) = 114 V on C_s; the ringing swings @a negative.
expect peak C_s.v < 115 V
expect min @a > -140 V                   # ≤ 114 V on C_s plus ≤ 470 ohm × 50 mA
expect peak K1.v < 164 V                 # 24 V + 140 V
expect final L_coil.i = 0 A ± 1 mA
