# expect: K1 closes at 1 ms and connects V1 and V2 straight to each other
# line: 7
# A contact that ties two different ideal supplies together when it closes.
V1: voltage-source a -> gnd, dc 12 V
V2: voltage-source b -> gnd, dc 5 V
R1: resistor b -> c, 100 ohm
K1: switch a -> b, closes at 1 ms
C1: capacitor c -> gnd, 10 uF
