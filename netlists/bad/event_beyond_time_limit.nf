# error 5:44: '1e300 s' is beyond 1e9 s (about 30 years), the longest time netfold computes with
# A time further from t = 0 than 1e9 s: double precision cannot place events there (issue 12).
V1: voltage-source a -> gnd, dc 12 V
R1: resistor a -> b, 1 kohm
K1: switch b -> c, closes at 0 s, opens at 1e300 s
C1: capacitor c -> gnd, 10 uF
