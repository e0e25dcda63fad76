# expect-ok:
# line: -
# A capacitor fed by an ideal current source alone sees no resistance (R_th = ∞): τ = ∞
# and its voltage ramps, v = I·t/C; a valid result, not a current-source cut-set.
I1: current-source gnd -> a, dc 1 mA
C1: capacitor a -> gnd, 1 uF, initial 0 V
window 0 s .. 10 ms
# value: C1.v 0.005 5 1e-9
