# expect: the resolution 1 ms is longer than the window
# line: 8
# No window declared: the default window (8 τ = 8 µs) is shorter than the declared
# resolution; the message must point at the 'resolution' line, the only line there is
# to change.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 ohm
resolution 1 ms
C1: capacitor b -> gnd, 1 uF
