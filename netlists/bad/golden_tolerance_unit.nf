# error 4:18: '1 mV' is a voltage, but 'golden-tolerance' needs a plain number or a percentage
# A golden tolerance is relative.
R1: resistor a -> gnd, 1 kohm
golden-tolerance 1 mV
