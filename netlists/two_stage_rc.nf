# Bench scenario: a sensor's 5 V reference is switched on at t = 0 and reaches an ADC input
# through a two-stage RC filter: 1 kohm + 1 µF, then 10 kohm + 100 nF (the second stage
# loads the first). Both capacitors start discharged.
title "Two-stage RC filter on a switched 5 V reference"

ref:   voltage-source r -> gnd, dc 5 V
K1:    switch r -> a, closes at 0 s
R1:    resistor a -> m, 1 kohm, rated 0.125 W
C1:    capacitor m -> gnd, 1 uF, initial 0 V, rated 16 V
R2:    resistor m -> out, 10 kohm, rated 0.125 W
C2:    capacitor out -> gnd, 100 nF, initial 0 V, rated 16 V

watch @m, @out
window 0 .. 10 ms

# Characteristic equation (nodal analysis by hand): s² + b·s + c = 0 with
# b = 1/(R1C1) + 1/(R2C2) + 1/(R2C1) = 1000 + 1000 + 100 = 2100 /s, c = 1/(R1C1R2C2) = 10⁶ /s²:
# s₁ = −729.8 /s, s₂ = −1370.2 /s. Two real modes, the slowest τ = 1/729.8 = 1.370 ms.
expect tau = 1.370 ms ± 0.2%
# Step response of V·c/(s² + b·s + c): v_out = V·(1 + (s₂·e^(s₁t) − s₁·e^(s₂t))/(s₁ − s₂)).
expect @out at 1 ms = 1.2912 V ± 0.2%
expect @out at 2 ms = 2.8824 V ± 0.2%
expect @out at 5 ms = 4.7277 V ± 0.2%
expect max @out <= 5 V                   # overdamped: no overshoot
expect final @out = 4.9928 V ± 0.1%      # the same formula at 10 ms = 7.3 τ
# Charging capacitors from a fixed source, the resistors together dissipate what the
# capacitors end up storing, ½·(1.1 µF)·(5 V)² = 13.75 µJ (common practice, no source).
expect energy R1 < 13.75 uJ
