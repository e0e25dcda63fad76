# A strain-gauge Wheatstone bridge (three 1 kohm arms, the gauge at 1.1 kohm) excited by a
# 5 V step at t = 1 ms. A 100 nF capacitor across the detector terminals a, b filters the
# bridge output before an amplifier (not modelled).
title "Wheatstone bridge with a filtered detector"

V_exc:  voltage-source e -> gnd, step 5 V at 1 ms
R1:     resistor e -> a, 1 kohm
R2:     resistor a -> gnd, 1 kohm
R3:     resistor e -> b, 1 kohm
R_gauge: resistor b -> gnd, 1.1 kohm
C_det:  capacitor a -> b, 100 nF

watch C_det.v, @a, @b

expect tau = 102.4 us ± 1%            # 100 nF × (1k ∥ 1k + 1k ∥ 1.1k) = 100 nF × 1.024 kohm
expect rth = 1.024 kohm ± 1%
expect vth = 0 V ± 1 mV               # before the step the bridge is unexcited
expect vth[2] = -119.0 mV ± 1%        # 5 V × (1k/2k − 1.1k/2.1k)
expect final C_det.v = -119.0 mV ± 1%
