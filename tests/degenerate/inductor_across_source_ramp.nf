# expect-ok:
# line: -
# An inductor straight across an ideal voltage source sees a short (R_th = 0): τ = ∞ and
# its current ramps, i = V·t/L, exactly; a valid result, not an error.
V1: voltage-source a -> gnd, dc 1 V
L1: inductor a -> gnd, 1 H, initial 0 A
window 0 s .. 1 s
# value: L1.i 0.5 0.5 1e-9
