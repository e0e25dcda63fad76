# error 3:33: '2 V' is a voltage, but 'dc' on a current-source needs a current
# A current-source takes its waveform in amperes.
I1: current-source gnd -> a, dc 2 V
R1: resistor a -> gnd, 1 kohm
