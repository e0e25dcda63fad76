# A sensor's 2.5 V output picks up 50 mV of 50 Hz hum on its cable. An RC low-pass
# (10 kohm, 1 µF) in front of the ADC removes most of it; the ADC input is 1 Mohm.
# The sensor connects to the filter when its supply comes up at t = 0.
title "Sensor RC filter against mains hum"

sensor:  voltage-source s -> gnd, dc 2.5 V + sine 50 mV 50 Hz
K_pwr:   switch s -> f, closes at 0 s
R_f:     resistor f -> out, 10 kohm
C_f:     capacitor out -> gnd, 1 uF, rated 16 V
R_adc:   resistor out -> gnd, 1 Mohm

watch @s, @out
window 0 .. 100 ms
resolution 20 us

expect tau = 9.901 ms ± 1%            # 1 µF × (10 kohm ∥ 1 Mohm)
expect rth = 9.901 kohm ± 1%          # sensor shorted: 10 kohm ∥ 1 Mohm
expect final @out = 2.475 V ± 1%      # 2.5 V × 1 Mohm / 1.01 Mohm; hum left ≈ 15 mV < 24.75 mV
expect amplitude @out = 15.15 mV ± 2% # 50 mV × |Z/(10 kohm + Z)| with Z = 1 Mohm ∥ 1 µF at 50 Hz (≈ 0.303)
