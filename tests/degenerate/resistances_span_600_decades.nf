# expect: resistances span more than 1e13 (R2 = 1e-300 Ω to R3 = 1e+300 Ω)
# line: 9
# 1e-300 ohm and 1e300 ohm in one network, around an ordinary RC: the capacitor sees
# R1 + R2 = 1 kohm (the 1e300 ohm leak is nothing beside it), so τ = 1 ms and
# v_C(1 ms) = 5 V·(1 − e⁻¹). Solving it right, or refusing it as ill-conditioned, are both
# acceptable; reporting R_th = ∞ is not. netfold refuses it, naming both resistors.
V1: voltage-source a -> gnd, step 5 V at 0 s
R1: resistor a -> b, 1 kohm
R2: resistor b -> c, 1e-300 ohm
R3: resistor b -> gnd, 1e300 ohm
C1: capacitor c -> gnd, 1 uF, initial 0 V
window 0 s .. 5 ms
