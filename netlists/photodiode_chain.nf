# A photodiode current (100 µA when a light pulse arrives at 0.5 ms) read by a chain of
# ideal controlled sources: a transresistance stage (ccvs, 10 kohm) turns the current in the
# 1 kohm sense resistor into 1 V; a transconductance stage (vccs, 1 mS) turns that into 1 mA;
# a current mirror (cccs, gain 1) copies it into a 2 kohm load with a 100 nF filter capacitor.
title "Photodiode readout through controlled sources"

I_pd:    current-source gnd -> s, step 100 uA at 0.5 ms
R_sense: resistor s -> gnd, 1 kohm
H_tr:    ccvs t -> gnd, gain 10 kohm, sense R_sense      # v(t) = 10 kohm × i(R_sense)
R_t:     resistor t -> gnd, 10 kohm
G_tc:    vccs gnd -> m, gain 1 mS, sense t -> gnd        # 1 mS × v(t) into node m
R_m:     resistor m -> gnd, 1 kohm
F_mir:   cccs gnd -> o, gain 1, sense R_m                # copies i(R_m) into node o
R_o:     resistor o -> gnd, 2 kohm
C_o:     capacitor o -> gnd, 100 nF

watch @t, @m, C_o.v

expect tau = 200 us ± 1%              # the mirror output is a current source: 2 kohm × 100 nF
expect rth = 2 kohm ± 1%
expect vth[2] = 2 V ± 1%              # 100 µA → 1 V → 1 mA → 1 mA × 2 kohm
expect final C_o.v = 2 V ± 1%
