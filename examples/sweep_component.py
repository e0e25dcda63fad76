#!/usr/bin/env python3
"""Sweep one component value and plot the stress it causes, with the netfold module.

The circuit is the 24 V AC solenoid valve of netlists/valve_coil.nf: a relay contact K1 feeds
the coil (18 ohm, 120 mH) and opens at 35 ms; a freewheel resistor across the coil then takes
the coil current. A larger resistor lets the current die away sooner, but the contact and the
coil terminals see a higher voltage spike. This script solves the circuit for a range of
freewheel resistors, each built from a text template, and draws the peak voltage at the coil
terminals and the decay time constant after the contact opens against the resistor value.

    python3 examples/sweep_component.py --out peak_stress.png

Needs the netfold module (PYTHONPATH=build/python from a build tree) and Matplotlib.
"""
import argparse

import matplotlib

matplotlib.use("Agg")  # files only, no display needed
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

import netfold  # noqa: E402

CIRCUIT = """\
title "Valve coil, freewheel resistor {r:.4g} ohm"
ground n
supply:   voltage-source l -> n, cosine 24 Vrms 50 Hz phase 0 deg
K1:       switch l -> a, closes at 0 s, opens at 35 ms
coil_r:   resistor a -> b, 18 ohm
coil_l:   inductor b -> n, 120 mH
free_r:   resistor a -> n, {r:.6g} ohm
watch coil_l.i, @a
"""

# The contact's switching-voltage rating we design against (a common relay figure).
CONTACT_RATING_V = 250.0


def sweep(values):
    """Peak |v| at the coil terminals (V) and the time constant after opening (s), per value."""
    peaks, taus = [], []
    for r in values:
        circuit = netfold.parse(CIRCUIT.format(r=r), path=f"valve_coil[free_r={r:.4g}]")
        solution = netfold.solve(circuit, verify=False)
        peaks.append(solution.figures["@a"]["peak"])
        taus.append(solution.segments[-1]["tau"])
    return np.array(peaks), np.array(taus)


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default="peak_stress.png", help="PNG file to write")
    parser.add_argument("--points", type=int, default=25, help="resistor values, log-spaced")
    parser.add_argument("--from-ohm", type=float, default=47.0)
    parser.add_argument("--to-ohm", type=float, default=4700.0)
    args = parser.parse_args()

    values = np.geomspace(args.from_ohm, args.to_ohm, args.points)
    peaks, taus = sweep(values)

    fig, (top, bottom) = plt.subplots(2, 1, sharex=True, figsize=(7.0, 6.0))
    top.loglog(values, peaks, "o-", label="peak |v| at the coil terminals")
    top.axhline(CONTACT_RATING_V, color="tab:red", linestyle="--", label=f"contact rating {CONTACT_RATING_V:g} V")
    top.set_ylabel("peak voltage (V)")
    top.legend(loc="upper left")
    top.grid(True, which="both", alpha=0.3)
    bottom.loglog(values, taus * 1e3, "s-", color="tab:green")
    bottom.set_ylabel("decay time constant (ms)")
    bottom.set_xlabel("freewheel resistor (ohm)")
    bottom.grid(True, which="both", alpha=0.3)
    fig.suptitle("Valve coil: contact opening at 35 ms against the freewheel resistor")
    fig.tight_layout()
    fig.savefig(args.out, dpi=100)

    below = values[peaks <= CONTACT_RATING_V]
    print(f"{len(values)} values from {values[0]:.4g} to {values[-1]:.4g} ohm written to {args.out}")
    if below.size:
        print(f"largest freewheel resistor within the contact rating: {below.max():.4g} ohm")


if __name__ == "__main__":
    main()
