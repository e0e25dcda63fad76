# Bench scenario: a 12 V rail comes up at 2 ms, while the converter in front of it has
# always put 1 V of 1 kHz ripple on the line. An RC filter (100 ohm, 10 µF) feeds an
# analogue stage that draws no current. The supply is a sine plus a step.
title "RC filter on a rail with ripple, powered up at 2 ms"

rail:   voltage-source r -> gnd, sine 1 V 1 kHz + step 12 V at 2 ms
R_f:    resistor r -> out, 100 ohm, rated 0.25 W
C_f:    capacitor out -> gnd, 10 uF, rated 25 V

watch @r, @out

expect tau = 1 ms ± 0.5%              # 100 ohm × 10 µF; the step at 2 ms makes segment 2, same tau
expect tau[2] = 1 ms ± 0.5%
expect vth = 0 V ± 1 mV               # the ripple is sin(0) = 0 at t = 0, the rail not up yet
expect vth[2] = 12 V ± 0.5%           # 12 V + sin(2π × 1 kHz × 2 ms) = 12 V + 0
expect amplitude @out = 157.2 mV ± 0.5%      # 1 V / √(1 + (2π × 1 kHz × 1 ms)²) = 1 V / 6.362
expect phase @out = -170.96 deg ± 0.2 deg    # sine = cosine at −90°, RC lag atan(2π × 1 kHz × 1 ms) = 80.96°
expect min @out = -157.2 mV ± 1%      # before the step only the (steady) ripple is there
expect max @out <= 12.16 V            # 12 V + 157.2 mV of ripple; the step's transient approaches from below
expect @out at 3 ms = 7.430 V ± 0.5%  # 12 V × (1 − e^−1) = 7.585 V, plus the ripple 157.2 mV × cos(6π − 170.96°) = −155.3 mV
