# Bench scenario: a 100 uF power-factor capacitor with a 50 uH inrush reactor on a 230 V 50 Hz
# supply. Its contactor parts at 20 ms and its arc carries the current to the next zero, where
# the capacitor's voltage is at its crest: the bank is left charged. The contactor recloses
# 10 ms later, at the opposite crest of the supply: the worst case for the contacts.
title "Capacitor bank disconnected at current zero and reclosed half a cycle later"
ground n

mains:   voltage-source l -> n, cosine 230 Vrms 50 Hz      # crests at 0, 10, 20, 30 ms
K1:      switch l -> a, opens at current zero after 20 ms, closes at 30 ms, rated 1 kV, rated 2 kA
reactor: inductor a -> b, 50 uH
r_w:     resistor b -> c, 10 mohm
c_bank:  capacitor c -> n, 100 uF, rated 1 kV

watch c_bank.v, c_bank.i, K1.v
window 0 .. 40 ms

# Below resonance the capacitor's steady-state voltage is in phase with the supply, with crest
# 325.27 V / (1 − ω²LC) = 325.43 V (series LC, textbook); its current is zero at that crest, and
# the contactor leaves it there (common practice, no source).
# Half a cycle later the supply is at −325.27 V: the open contacts see both, 650.7 V.
expect peak K1.v = 650.7 V ± 0.5%
# Reclosing 650.7 V onto L and C: the lossless first peak is ΔV/√(L/C) = 650.7 V / 0.7071 ohm
# = 920 A (textbook, from memory); the 10 mohm and the supply's motion during the first quarter
# of the 2.25 kHz ringing take about 1 % off it.
expect peak c_bank.i = 920 A ± 3%
# The capacitor rings from +325.4 V about the supply's −325.3 V with the underdamped overshoot
# e^(−ζπ/√(1−ζ²)), ζ = (R/2)·√(C/L) = 0.00707 (textbook): −325.3 V − 650.7 V · 0.978 = −961.7 V,
# nearly three times the crest.
expect peak c_bank.v = 961.7 V ± 1%
