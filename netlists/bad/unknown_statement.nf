# error 4:1: expected an element (NAME: kind a -> b, value) or a directive, found 'wach'
# A misspelt directive.
R1: resistor a -> gnd, 1 kohm
wach R1.v
