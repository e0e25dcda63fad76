# An LED night light on a capacitive dropper, pulled from the socket and plugged in again within a
# second: the 470 kohm bleeder has not yet discharged the X capacitor, which may hold anything up
# to the mains crest of either sign, and the plug meets the mains at any angle. One joint sweep
# covers the angle and the residual charge, jointly with the mains ±10 %, the film capacitor's
# ±20 % and the inrush resistor's ±5 %. The LED string with its series resistor is taken as 2.2 kohm
# (no diodes in this model); its datasheet allows 300 mA for a short pulse.
title "LED night light on a capacitive dropper, plugged in again with a charged capacitor"
ground n

mains:   voltage-source l -> n, cosine 230 Vrms 50 Hz, tolerance 10%
K_plug:  switch l -> a, closes at 0 s
R_in:    resistor a -> b, 150 ohm, tolerance 5%, pulse-rated 1 J
C_x:     capacitor b -> c, 330 nF, tolerance 20%, rated 630 V
R_bleed: resistor b -> c, 470 kohm
R_led:   resistor c -> n, 2.2 kohm

watch R_led.i, C_x.v
window 0 .. 60 ms
sweep mains.phase -180 deg .. 180 deg, C_x.initial -325 V .. 325 V

# The LED current jumps at the plug's closing to (v_mains(0) − v_C(0)) / (R_in + R_led) and then
# decays with τ ≈ 330 nF × 2.35 kohm = 0.78 ms into the steady 34 mA peak. Worst: the mains crest
# +10 % (357.8 V) against the opposite full charge through R_in −5 %:
# (357.8 V + 325 V) / (142.5 ohm + 2.2 kohm) = 291.5 mA, under the LED string's 300 mA pulse.
expect worst peak R_led.i = 291.5 mA ± 0.5%
expect worst peak R_led.i < 300 mA
# The capacitor's largest voltage is its steady-state crest at the smallest capacitance: mains
# +10 % (357.8 V) × X_C / |Z| with C −20 % (X_C = 12.06 kohm, |Z| = 12.28 kohm) = 351.2 V; the
# first-order transient does not overshoot it by more than a fraction of a volt.
expect worst peak C_x.v = 351.2 V ± 0.5%
# A pulse over 200 mA needs a closing near a crest against a large opposite charge.
expect share peak R_led.i > 200 mA <= 15%
