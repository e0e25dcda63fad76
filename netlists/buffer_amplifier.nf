# An op-amp voltage follower, modelled as a voltage-controlled voltage source of open-loop
# gain 1e5 whose inverting input is its own output, drives an RC load. The input steps to
# 1 V at t = 1 ms.
title "Op-amp follower driving an RC load"

V_in:  voltage-source in -> gnd, step 1 V at 1 ms
E_amp: vcvs o -> gnd, gain 1e5, sense in -> o     # v(o) = 1e5 · (v(in) − v(o))
R_out: resistor o -> x, 1 kohm
C_L:   capacitor x -> gnd, 1 uF

watch @o, C_L.v

expect tau = 1 ms ± 1%                # the follower's output is stiff: 1 kohm × 1 µF
expect rth = 1 kohm ± 1%
expect vth[2] = 0.99999 V ± 0.01%     # 1 V × 1e5 / (1 + 1e5)
expect final C_L.v = 1 V ± 0.1%       # 8 time constants after the step: within 0.04 %
