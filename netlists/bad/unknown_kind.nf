# error 4:5: unknown element kind 'resistr'; the kinds are resistor, capacitor, inductor, voltage-source, current-source, switch, diode, vcvs, vccs, ccvs or cccs
# A misspelt element kind.
V1: voltage-source a -> gnd, dc 5 V
R1: resistr a -> gnd, 1 kohm
