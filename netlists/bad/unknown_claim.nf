# error 5:8: unknown claim quantity 'risetime'; expected tau, rth, vth, peak, max, min, final, amplitude, phase, energy, i2t, worst peak, frequency, damping, share peak, time-below, dvdt, didt, rms, power, or OBS at TIME
# Claims state one of the listed quantities.
R1: resistor a -> gnd, 1 kohm
C1: capacitor a -> gnd, 1 uF
expect risetime < 3 ms
