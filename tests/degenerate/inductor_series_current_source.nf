# expect: inductor L1 is in series with current source I1
# line: 6
# An inductor in series with an ideal current source: the source fixes the inductor's
# current, so there is nothing for the inductor to decide.
I1: current-source gnd -> a, dc 1 A
L1: inductor a -> b, 10 mH
R1: resistor b -> gnd, 10 ohm
