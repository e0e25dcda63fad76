# expect: is 1e-306 s (R_th = 1e-300 Ω with C1 = 1 µF), far below anything that can be resolved
# line: 7
# A 1e-300 ohm resistor in series with the capacitor: τ = 1e-306 s, far below anything a
# double can resolve after t = 0: refused, with the advice to give the path its real resistance.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1e-300 ohm
C1: capacitor b -> gnd, 1 uF, initial 0 V
window 0 s .. 1 ms
