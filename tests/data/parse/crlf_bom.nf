# A fixture in CRLF line ends after a byte-order mark, as some editors save files.
title "CRLF line ends after a byte-order mark"
V1: voltage-source a -> gnd, dc 5 V
R1: resistor a -> gnd, 1 kohm
