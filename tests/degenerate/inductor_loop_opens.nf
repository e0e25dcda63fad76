# expect: inductor L1 carries
# line: 7
# A contact that breaks the only path of an inductor's current: the current would have to
# drop to zero in no time (in a real circuit, the contact arcs).
V1: voltage-source a -> gnd, dc 12 V
K1: switch a -> b, closes at 0 s, opens at 10 ms
L1: inductor b -> c, 100 mH
R1: resistor c -> gnd, 10 ohm
