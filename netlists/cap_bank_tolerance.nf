# A 10 µF power-factor capacitor switched onto 230 V, 50 Hz mains (±10 %) through a 10 ohm
# damping resistor (±5 %) and a contact. The contact may close at any point of the wave, and the
# capacitor may still hold up to ±100 V from its last disconnection: one joint sweep covers both,
# jointly with the two tolerances.
title "Capacitor bank closing with toleranced mains and damping resistor"
ground n

mains:   voltage-source l -> n, cosine 230 Vrms 50 Hz, tolerance 10%
K1:      switch l -> a, closes at 0 s, rated 60 A
R_damp:  resistor a -> b, 10 ohm, tolerance 5%
C1:      capacitor b -> n, 10 uF, rated 400 V

watch K1.i, C1.v
sweep mains.phase -180 deg .. 180 deg, C1.initial -100 V .. 100 V

expect tau = 100 us ± 1%          # 10 ohm × 10 µF at nominal values
# The contact current jumps at closing to (v_mains(0) − v_C(0)) / R_damp and decays with
# τ ≈ 100 µs, far shorter than the period, so the closing instant gives the peak. Worst: the
# mains at its crest +10 % against the opposite residual charge, through R_damp −5 %:
# (1.1 × 230 V × √2 + 100 V) / (0.95 × 10 ohm) = (357.8 V + 100 V) / 9.5 ohm = 48.19 A.
expect worst peak K1.i = 48.19 A ± 0.1%
# A first-order RC does not overshoot: |v_C| stays below the larger of the residual 100 V and the
# mains crest +10 %, 357.8 V (the steady state is 357.8 V × 318.3 ohm / |Z| ≈ 357.6 V).
expect worst peak C1.v < 358 V
# The current passes 40 A only near the crest of the wave with a large opposite residual charge
# and the high corners of the tolerances: a small share of the swept box (under 3 % on its grid).
expect share peak K1.i > 40 A <= 5%
