# Bench scenario: a 48 V DC bus is switched onto the input filter of a converter: a 10 µH
# choke (50 mohm winding) and a 100 µF capacitor (20 mohm ESR). The converter is modelled as
# the 10 ohm resistor it looks like at full load (4.8 A); its constant-power behaviour is not
# modelled. The filter rings at its LC frequency and the capacitor overshoots the bus.
title "LC input filter switched onto a 48 V DC bus"

bus:     voltage-source p -> gnd, dc 48 V
K1:      switch p -> a, closes at 0 s, rated 200 A
L_f:     inductor a -> b, 10 uH, rated 160 A
R_w:     resistor b -> c, 50 mohm                          # choke winding
R_esr:   resistor c -> e, 20 mohm                          # capacitor ESR, in series with C_f
C_f:     capacitor e -> gnd, 100 uF, rated 100 V
R_conv:  resistor c -> gnd, 10 ohm, rated 250 W            # 47.8 V² / 10 ohm = 228 W sustained

watch L_f.i, C_f.v, @c
window 0 .. 3 ms

# f₀ = 1/(2π√(LC)) = 1/(2π√(10 µH × 100 µF)) = 5.033 kHz, Z₀ = √(L/C) = 0.316 ohm.
# Decay rate α ≈ (R_w + R_esr)/(2L) + 1/(2·R_conv·C) = 3500 + 500 = 4000 /s, so
# ζ = α/ω₀ ≈ 0.126 and f_d = f₀·√(1 − ζ²) ≈ 4.99 kHz; the load across the ESR branch makes
# these approximate, hence the tolerances.
expect frequency[1] = 4.99 kHz ± 2%
expect damping[1] = 0.126 ± 5%
expect tau = 250 us ± 5%                 # 1/α
# Overshoot above the bus ≈ 48 V × e^(−ζπ/√(1−ζ²)) = 32 V (textbook second-order step);
# never above 2 × 48 V, the lossless bound.
expect max C_f.v > 75 V
expect max C_f.v < 96 V
expect peak L_f.i < 152 A                # lossless bound 48 V / Z₀ = 151.8 A
expect final C_f.v = 47.76 V ± 0.2%      # DC: 48 V × 10 / (10 + 0.05)
expect final L_f.i = 4.776 A ± 0.2%      # 48 V / 10.05 ohm
