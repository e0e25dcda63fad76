# expect: the default window would be 0 s .. 8e+300 s (8 τ of C1), longer than 1e9 s
# line: 7
# No window declared and τ = 1e300 s: the default window (8 τ) would be 8e300 s long, a
# sure sign of a mistyped value; refused at the storage element, with the advice to declare one.
V1: voltage-source a -> gnd, step 5 V at 1 ms
R1: resistor a -> b, 1e300 ohm
C1: capacitor b -> gnd, 1 F
