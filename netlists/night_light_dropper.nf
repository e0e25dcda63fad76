# A capacitive dropper feeding a night light from the 230 V, 50 Hz mains.
# The 470 nF X2 capacitor drops most of the mains voltage (|Xc| = 1/(2π·50·470n) ≈ 6.8 kohm),
# which sets a string current of about 30 mA rms. A 1 Mohm bleeder discharges the capacitor
# when the lamp is unplugged; a 100 ohm resistor limits the inrush when the wall switch closes.
# The LED string (30 white LEDs at about 3.2 V and 30 mA, behind a bridge) is modelled as 3.3 kohm.
title "Night light on a capacitive dropper"
ground N

mains:    voltage-source L -> N, cosine 230 Vrms 50 Hz phase 0 deg   # closing at the crest: worst inrush
K1:       switch L -> a, closes at 0 s, rated 2 A                      # the wall switch
R_inrush: resistor a -> b, 100 ohm, rated 0.5 W, pulse-rated 1 J      # about 0.09 W in steady state
C1:       capacitor b -> c, 470 nF, rated 400 V, rated-dvdt 200 V/us   # X2 class, 275 Vac; pulse rating assumed for the example
R_bleed:  resistor b -> c, 1 Mohm, rated 0.25 W
R_led:    resistor c -> N, 3.3 kohm

watch C1.v, C1.i, R_inrush.p
sweep mains.phase -180 deg .. 180 deg step 15 deg

expect tau = 1.593 ms ± 1%        # 470 nF × (1 Mohm ∥ (100 ohm + 3.3 kohm)) = 470 nF × 3.388 kohm
expect rth = 3.388 kohm ± 1%      # mains shorted: 1 Mohm ∥ 3.4 kohm
expect vth = 324.2 V ± 1%         # open-circuit C1 at t = 0+: 325.3 V × 1 Mohm / (1 Mohm + 3.4 kohm)
