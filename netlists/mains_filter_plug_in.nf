# Bench scenario: an appliance with a two-stage mains filter is plugged in at the crest of
# the 230 V, 50 Hz supply (325 V). The lead and supply add 300 mohm and 2 µH in front of the
# first X capacitor (470 nF, 1 Mohm bleeder); a 1 mH choke (200 mohm) and a second X
# capacitor (220 nF) follow; the appliance draws 100 W (530 ohm).
title "Mains filter plugged in at the voltage crest"

mains:    voltage-source l -> gnd, cosine 230 Vrms 50 Hz
plug:     switch l -> a, closes at 0 s, rated 200 A
R_lead:   resistor a -> b, 300 mohm
L_lead:   inductor b -> c, 2 uH
C_x1:     capacitor c -> gnd, 470 nF, rated 630 V
R_bleed:  resistor c -> gnd, 1 Mohm
L_ch:     inductor c -> d, 1 mH, rated 6 A                 # saturation current: see the surge below
R_ch:     resistor d -> e, 200 mohm
C_x2:     capacitor e -> gnd, 220 nF, rated 630 V
R_app:    resistor e -> gnd, 530 ohm, rated 150 W

watch plug.i, C_x1.v, C_x2.v, L_ch.i
window 0 .. 40 ms

# First ring, lead into C_x1: f₁ = 1/(2π√(2 µH × 470 nF)) = 164 kHz, Z₁ = √(L/C) = 2.063 ohm,
# ζ₁ = R_lead/(2·Z₁) = 0.073 (textbook series RLC). Lossless bound on the plug current:
# 325.3 V / 2.063 ohm = 157.7 A; on C_x1: 2 × 325.3 V = 651 V; with ζ₁ the overshoot is
# e^(−ζ₁π/√(1−ζ₁²)) = 0.795, so C_x1 peaks near 325.3 V × 1.795 = 584 V.
expect peak plug.i < 158 A
expect peak C_x1.v < 651 V
expect peak C_x1.v > 550 V
# Second ring, choke into C_x2 (the lead is a near short at its frequency):
# f₂ = 1/(2π√(1 mH × 220 nF)) = 10.73 kHz, Z₂ = 67.4 ohm, α₂ = R_ch/(2L) + 1/(2·R_app·C) =
# 100 + 4288 = 4388 /s, ζ₂ = α₂/ω₂ = 0.065: the slowest-decaying oscillatory mode, and it
# takes C_x2 to about 325.3 V × (1 + e^(−ζ₂π)) = 590 V.
expect frequency[1] = 10.7 kHz ± 1%
expect damping[1] = 0.065 ± 5%
expect peak C_x2.v < 651 V
# The choke's surge is about 325.3 V / Z₂ = 4.83 A (C_x2 charged through it), eight times its
# 0.6 A running current: a choke chosen by its running current alone would saturate. C_x1's
# overshoot adds a little, hence the margin.
expect peak L_ch.i < 5.5 A
# Steady state: the filter is transparent at 50 Hz: 325.3 V × 530 / 530.5.
expect amplitude C_x2.v = 325 V ± 1%
expect amplitude L_ch.i = 613 mA ± 1%    # 325 V / 530 ohm
