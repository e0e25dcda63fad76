# Bench scenario: a relay contact switches a 48 V DC heater element (24 ohm, 2 A).
# An RC snubber (100 ohm + 100 nF) across the contact softens the voltage step when the
# contact opens and dumps its charge into the contact when it closes again.
title "RC snubber across a DC contact"

bus:     voltage-source p -> gnd, dc 48 V
R_load:  resistor p -> k, 24 ohm, rated 150 W                  # 48 V² / 24 ohm = 96 W while on
K1:      switch k -> gnd, opens at 1 ms, closes at 5 ms, rated 5 A, rated 250 V   # 250 V across the open contact: a common relay rating
R_s:     resistor k -> s, 100 ohm, pulse-rated 1 J
C_s:     capacitor s -> gnd, 100 nF, rated 100 V

watch K1.v, K1.i, C_s.v

expect tau = 10 us ± 1%              # contact closed: 100 nF × 100 ohm (the contact shorts the rest)
expect vth = 0 V ± 1 mV              # the closed contact holds k at 0 V
expect tau[2] = 12.4 us ± 1%         # contact open: 100 nF × (100 ohm + 24 ohm)
expect rth[2] = 124 ohm ± 0.5%       # 100 ohm + 24 ohm, the supply shorted
expect vth[2] = 48 V ± 0.5%          # open contact, no snubber current: the full supply
expect K1.v at 1 ms = 38.71 V ± 0.5% # just after opening C_s is at 0 V: 48 V × 100 / (100 + 24)
expect max K1.v = 48 V ± 0.5%        # the snubber charges up to the supply, no overshoot (first order)
expect tau[3] = 10 us ± 1%           # contact reclosed: 100 nF × 100 ohm again
expect peak K1.i = 2.48 A ± 0.5%     # at reclosing: 48 V / 24 ohm + 48 V / 100 ohm from C_s
expect energy R_s = 208.1 uJ ± 1%    # ½ × 100 nF × (48 V)² = 115.2 µJ, × (100/124 on opening + 1 on closing)
expect i2t K1 < 0.005 A2s            # 2 A for 1 ms (4 mA²s), then 2 A plus the decaying 0.48 A for 80 µs (0.34 mA²s)
