# Bench scenario: a 5 A current transformer secondary, modelled as a 5 Arms current source
# (primary current at −30°) with its 50 mH magnetising inductance, drives a 0.2 ohm burden.
# A test link shorts the secondary until it is opened at 40 ms. A transresistance amplifier
# (a ccvs of 1 ohm) reads the burden current; a transconductance stage (vccs) turns the
# burden voltage into a current for a 1 kohm meter input.
title "Current-transformer burden with a test link"

I_ct:    current-source gnd -> s, cosine 5 Arms 50 Hz phase -30 deg
L_m:     inductor s -> gnd, 50 mH
K_link:  switch s -> gnd, opens at 40 ms, rated 10 A
R_b:     resistor s -> gnd, 0.2 ohm, rated 10 W
H_mon:   ccvs m -> gnd, gain 1 ohm, sense R_b           # v(m) = 1 ohm × i(R_b)
R_m:     resistor m -> gnd, 10 kohm
G_out:   vccs gnd -> q, gain 10 mS, sense s -> gnd      # 10 mS × v(s) into node q
R_q:     resistor q -> gnd, 1 kohm

watch @s, @m, @q, L_m.i
resolution 500 us

expect tau > 1 s                        # link closed: L_m is shorted, R_th = 0, tau = ∞ (it holds its current)
expect rth < 1 mohm                     # R_th = 0
expect tau[2] = 250 ms ± 0.5%           # link open: 50 mH / 0.2 ohm (the current source is an open circuit)
expect rth[2] = 0.2 ohm ± 0.1%
expect amplitude @s = 1.414 V ± 0.5%    # 5 Arms × √2 × 0.2 ohm; X_m = 2π × 50 Hz × 50 mH = 15.71 ohm ≫ 0.2 ohm
expect phase @s = -29.27 deg ± 0.1 deg  # −30° + atan(0.2 ohm / 15.71 ohm) = −30° + 0.73°
expect amplitude @m = 7.07 V ± 0.5%     # 1 ohm × 7.071 A: the magnetising branch takes 0.01 % of it
expect amplitude @q = 14.14 V ± 0.5%    # 10 mS × 1.414 V × 1 kohm
expect @s at 40 ms = 1.225 V ± 0.5%     # L_m still at 0 A: 0.2 ohm × 7.071 A × cos(2π × 50 Hz × 40 ms − 30°) = 0.2 ohm × 6.124 A
expect peak @s < 1.45 V                 # 0.2 ohm × (7.071 A + twice the 90 mA magnetising current)
