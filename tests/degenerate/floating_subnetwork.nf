# expect-ok: no path to the reference
# line: 9
# A sub-network (nodes c, d) that touches the rest of the circuit nowhere: its voltages
# against the reference are undefined. Nothing watches it, so the storage element's result
# stands, but a node name that appears nowhere else is usually a typing mistake.
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 1 uF
R2: resistor c -> d, 1 kohm
V2: voltage-source c -> d, dc 1 V
