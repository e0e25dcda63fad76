# Bench scenario: a 24 V DC brake coil (12 ohm, 60 mH) with a 100 ohm freewheel resistor.
# The control contact drops out for 2 ms (a supply dip) and recloses: the coil current has
# not died away when it recloses. The sweep covers the current a previous operation may
# have left in the coil.
title "Brake coil on a contact that recloses"

V_dc:    voltage-source p -> gnd, dc 24 V
K1:      switch p -> a, closes at 0 s, opens at 20 ms, closes at 22 ms, rated 3 A
R_fw:    resistor a -> gnd, 100 ohm, rated 10 W
coil_r:  resistor a -> m, 12 ohm
coil_l:  inductor m -> gnd, 60 mH, rated 2.5 A

watch coil_l.i, K1.v, @a
sweep coil_l.initial -0.5 A .. 2 A step 0.25 A

expect tau = 5 ms ± 0.5%                   # contact closed: 60 mH / 12 ohm (the supply shorts R_fw)
expect rth = 12 ohm ± 0.1%
expect coil_l.i at 20 ms = 1.963 A ± 0.5%  # 24 V / 12 ohm × (1 − e^(−20 ms / 5 ms)) = 2 A × 0.9817
expect tau[2] = 535.7 us ± 0.5%            # contact open: 60 mH / (12 ohm + 100 ohm)
expect min @a = -196.3 V ± 0.5%            # at opening the coil drives its 1.963 A through R_fw: −1.963 A × 100 ohm
expect peak K1.v = 220.3 V ± 0.5%          # across the open contact: 24 V − (−196.3 V)
expect coil_l.i at 22 ms = 46.97 mA ± 1%   # 1.963 A × e^(−2 ms / 535.7 µs) = 1.963 A × 0.02393
expect tau[3] = 5 ms ± 0.5%                # reclosed
expect final coil_l.i >= 1.99 A            # 40 ms = 8 tau after reclosing: 2 A − 1.95 A × e^(−8) = 1.9993 A
expect worst peak K1.v = 224 V ± 0.1%      # with the coil already at 2 A (the top of the sweep): 24 V + 2 A × 100 ohm
