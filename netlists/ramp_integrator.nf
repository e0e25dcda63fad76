# Bench scenario: a sawtooth timer. A 1 mA constant-current source charges a 10 µF timing
# capacitor; a reset transistor (modelled as a switch with 10 ohm on-resistance) holds the
# capacitor near 0 V, releases it at t = 0 and resets it again at 20 ms.
# With the reset open the capacitor sees no resistance at all: tau is infinite and the
# voltage is an exact ramp, I·t/C.
title "Constant-current ramp with reset"

I_chg:    current-source gnd -> r, dc 1 mA
C_t:      capacitor r -> gnd, 10 uF, rated 25 V
K_reset:  switch r -> gnd, opens at 0 s, closes at 20 ms, on 10 ohm, rated 1 A

watch C_t.v, K_reset.i
window 0 .. 25 ms
resolution 10 us

expect tau > 1 s                     # reset open: only the current source, R_th = ∞, tau = ∞
expect rth > 1 Gohm                  # R_th = ∞ (an ideal current source is an open circuit)
expect min C_t.v = 10 mV ± 1%        # before t = 0 the reset holds 1 mA × 10 ohm
expect C_t.v at 10 ms = 1.01 V ± 0.5% # 10 mV + 1 mA × 10 ms / 10 µF
expect peak C_t.v = 2.01 V ± 0.5%    # at the reset: 10 mV + 1 mA × 20 ms / 10 µF
expect tau[2] = 100 us ± 1%          # reset closed: 10 µF × 10 ohm
expect peak K_reset.i = 201 mA ± 0.5% # the closed reset carries v / R_on: 2.01 V / 10 ohm
expect final C_t.v = 10 mV ± 1%      # 5 ms = 50 tau after the reset: back to 1 mA × 10 ohm
expect energy K_reset = 20.45 uJ ± 1% # ½ × 10 µF × (2 V)² = 20 µJ + cross term 10 µF × 2 V × 10 mV × 2 = 0.4 µJ + (10 mV)²/10 ohm × 5 ms = 0.05 µJ
