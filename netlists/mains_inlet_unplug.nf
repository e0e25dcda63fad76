# Bench scenario: the mains inlet of a small appliance, plugged in at the crest of the supply
# and pulled out 100 ms later, again at a crest. The X2 capacitor across the line stays charged
# to the crest voltage when the plug leaves the socket; the bleeder must bring the voltage on the
# plug's pins below 60 V within 1 s (the form of the capacitor-discharge rules of product-safety
# standards; the 60 V / 1 s figures here are this example's, common practice, no source).
# A 10 ohm inrush resistor limits the X capacitor's charging pulse, which the fuse (modelled by
# its cold resistance) must pass without melting, and whose dv/dt the capacitor must stand.
title "Mains inlet: X capacitor, bleeder and fuse, plugged in and pulled out"
ground n

mains:   voltage-source l -> n, cosine 230 Vrms 50 Hz        # crest at 0 s and at 100 ms
plug:    switch l -> p, closes at 0 s, opens at 100 ms, rated 800 V   # across the open contacts
fuse:    resistor p -> f, 150 mohm, rated-i2t 0.05 A2s        # melting I²t assumed for the example
r_in:    resistor f -> x, 10 ohm, pulse-rated 1 J
c_x:     capacitor x -> n, 470 nF, rated 400 V, rated-dvdt 200 V/us, rated-rms 500 mA
r_bleed: resistor x -> n, 680 kohm, rated 0.25 W

watch c_x.v, fuse.i
window 0 .. 1.5 s

# Plugged in at the crest onto an empty capacitor: dv/dt(0+) = 325.3 V / (10.15 ohm · 470 nF)
# = 68.18 V/µs (RC charging, textbook).
expect dvdt c_x = 68.18 V/us ± 0.1%
# Pulled out at the crest: the capacitor holds about 325 V and discharges through 680 kohm,
# τ = 320 ms; below 60 V after τ·ln(325.3/60) = 540 ms (RC discharge, textbook).
expect time-below c_x.v 60 V <= 1 s
expect time-below c_x.v 60 V = 540.2 ms ± 1%
# The bleeder's sustained dissipation while plugged in: (230 V)² / 680 kohm = 77.8 mW.
expect power r_bleed = 77.79 mW ± 0.5%
