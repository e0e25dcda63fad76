#!/usr/bin/env python3
"""Generates a circuit library for timing `netfold check` (see docs/check.md, "--jobs").

    bench/gen_library.py OUT_DIR [COUNT] [--heavy]   # default 1000 files

Every file is a first-order circuit whose claims are derived here from its element values,
so a correct netfold passes them all:

- RC charge from a DC step (tau = R·C, rth = R, final value V·(1 − e^−8) at 8 tau),
- RL on a cosine supply (tau = L/R, the fundamental's amplitude V/|Z| and phase −atan(ωL/R)),
- every tenth RL file also sweeps the closing angle (12 grid steps) and bounds the worst peak
  by twice the steady amplitude. With --heavy every RL file sweeps, on the default grid of
  360 steps: the worst-case search then dominates, as in a library of switching studies.

The values come from a seeded generator, so the same COUNT gives the same library.
"""
import math
import os
import random
import sys


def rc_file(rng, k):
    r = rng.choice([1.0, 2.2, 4.7, 10.0, 22.0, 47.0]) * 1e3
    c = rng.choice([10.0, 22.0, 47.0, 100.0, 220.0]) * 1e-9
    v = rng.choice([3.3, 5.0, 12.0, 24.0])
    tau = r * c
    final = v * (1.0 - math.exp(-8.0))
    return f"""# generated circuit {k}: RC charge from a DC step
title "generated RC {k}"
V1: voltage-source s -> gnd, step {v} V at 0 s
K1: switch s -> a, closes at 0 s
R1: resistor a -> b, {r:g} ohm
C1: capacitor b -> gnd, {c:g} F
watch C1.v, R1.i
expect tau = {tau:.6g} s ± 0.5%        # R × C
expect rth = {r:g} ohm ± 0.5%
expect final C1.v = {final:.6g} V ± 0.5%  # V × (1 − e^−8) at 8 tau
expect peak R1.i <= {v / r * 1.001:.6g} A     # V / R at the step
"""


def rl_file(rng, k, sweep, heavy):
    r = rng.choice([1.0, 2.0, 5.0, 10.0, 20.0])
    l = rng.choice([1.0, 2.2, 4.7, 10.0, 22.0]) * 1e-3
    v = rng.choice([10.0, 24.0, 48.0, 325.0])
    f = 50.0
    w = 2.0 * math.pi * f
    z = math.hypot(r, w * l)
    amp = v / z
    phase = -math.degrees(math.atan2(w * l, r))
    text = f"""# generated circuit {k}: RL on a cosine supply
title "generated RL {k}"
supply: voltage-source s -> gnd, cosine {v} V {f} Hz
K1: switch s -> a, closes at 0 s
R1: resistor a -> b, {r:g} ohm
L1: inductor b -> gnd, {l:g} H
watch L1.i
expect tau = {l / r:.6g} s ± 0.5%             # L / R
expect amplitude L1.i = {amp:.6g} A ± 0.5%    # V / |R + jωL|
expect phase L1.i = {phase:.6g} deg ± 0.1 deg # −atan(ωL / R)
expect peak L1.i < {2.0 * amp * 1.001:.6g} A  # at most twice the steady amplitude
"""
    if sweep or heavy:
        step = "" if heavy else " step 30 deg"
        text += f"""sweep supply.phase -180 deg .. 180 deg{step}
expect worst peak L1.i < {2.0 * amp * 1.001:.6g} A
"""
    return text


def main():
    args = [a for a in sys.argv[1:] if a != "--heavy"]
    heavy = len(args) != len(sys.argv) - 1
    if not args:
        sys.exit(__doc__)
    out = args[0]
    count = int(args[1]) if len(args) > 1 else 1000
    rng = random.Random(20261202)
    os.makedirs(out, exist_ok=True)
    for k in range(count):
        if k % 2 == 0:
            text = rc_file(rng, k)
        else:
            text = rl_file(rng, k, sweep=(k % 10 == 1), heavy=heavy)
        with open(os.path.join(out, f"circuit_{k:04d}.nf"), "w", encoding="utf-8") as fh:
            fh.write(text)


if __name__ == "__main__":
    main()
