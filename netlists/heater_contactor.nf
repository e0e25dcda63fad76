# A 2 kW resistive heater switched by a contactor on a 230 V, 50 Hz feeder. The feeder
# (cable and transformer) is modelled as 0.2 ohm in series with 1 mH; a 230 W lighting load
# on the same feeder keeps carrying the feeder current when the contactor opens.
# The contactor closes at t = 0 and opens again at 100 ms.
title "Heater contactor on an inductive feeder"
ground n

grid:      voltage-source l -> n, cosine 230 Vrms 50 Hz
R_feeder:  resistor l -> f, 0.2 ohm
L_feeder:  inductor f -> bus, 1 mH, rated 40 A
R_light:   resistor bus -> n, 230 ohm                   # 230 W at 230 V
K_heat:    switch bus -> h, closes at 0 s, opens at 100 ms, rated 40 A, rated-i2t 500 A2s
R_heater:  resistor h -> n, 26.45 ohm, rated 2.5 kW      # 2 kW at 230 V: 230² / 2000

watch L_feeder.i, K_heat.i, @bus
golden-tolerance 0.1 %

expect tau = 41.80 us ± 1%        # contactor closed: 1 mH / (0.2 ohm + 26.45 ohm ∥ 230 ohm) = 1 mH / 23.92 ohm
expect rth = 23.92 ohm ± 1%
expect tau[2] = 4.344 us ± 1%     # contactor open: 1 mH / (0.2 ohm + 230 ohm)
expect rth[2] = 230.2 ohm ± 1%
expect i2t K_heat < 500 A2s       # about 8.6 A rms for 100 ms: 7.4 A²s
