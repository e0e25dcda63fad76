#!/usr/bin/python3
"""Outside-reference check of netfold's diode handling with SciPy's event-driven integrator.

Three rectifiers, each with one storage element (the reservoir capacitor, state v), are written
out below as netlists; netfold solves each (`netfold solve FILE --json J --csv C --no-verify`) and
the same circuit is integrated here, independently of netfold:

- Each diode is the piecewise-linear model of the netlist format: conducting, v_d = V_f + R_on·i
  while i > 0; blocking, i = v_d / R_off while v_d < V_f. The state equation C·dv/dt = i_C(t, v)
  of every configuration (set of conducting diodes) is derived BY HAND from Kirchhoff's laws
  (written out in each model's comments), never from netfold's output.
- It is integrated with scipy.integrate.solve_ivp(method="Radau", rtol=1e-10) — source:
  scipy.integrate.solve_ivp, `events=` (SciPy 1.10 reference) — with one terminal event
  function per diode: a conducting diode's current falling through zero, a blocking diode's
  voltage rising through V_f. At each event the integration restarts from the event's state in
  the configuration that is consistent just after it (every conducting diode's current > 0,
  every blocking diode's voltage < V_f, judged one nanosecond later) and changes the fewest
  diodes, the one whose threshold was crossed among them: a diode changes state only at its own
  threshold (the netlist format's rule). So where one diode of a conducting bridge pair stops,
  its partner goes on carrying the blocking diodes' leakage (tens of µA) until that current
  too reaches zero; those later instants are compared as well. At t = 0 the consistent
  configuration must be unique.

Compared, case by case:

1. Half-wave rectifier switched on from empty at −120° of the supply's cosine (the diode starts
   blocked): every diode event instant of netfold's JSON against SciPy's (both ways, nearest
   instant), the diode states of every netfold segment (at its midpoint), c1.v and r_s.i at
   every CSV sample, the peak current (the first pulse's) and the peak capacitor voltage.
2. Bridge rectifier closed at the crest onto an empty bulk capacitor through an inrush
   resistor: the same, plus the first current against the textbook relation (Ohm's law, from
   memory) i(0+) = (V_pk − 2·V_f) / (R_s + 2·R_on), which is the peak because the capacitor
   voltage then rises faster than the supply's.
3. Half-wave capacitor-input rectifier in its periodic steady state (netfold starts there; the
   reference finds its own by shooting: v(T; v0) = v0 with scipy.optimize.brentq): the start
   state, events, samples, peak current, ripple and conduction time tightly, and netfold's
   ripple (max − min of c1.v) and conduction time (its segments with d1 conducting) against the
   textbook relations (from memory, e.g.
   any power-electronics text on capacitor-input filters):
       ripple        ΔV ≈ I_load / (f·C),   I_load = V_peak / R_load,  V_peak = V_pk − V_f
       conduction    cos θ ≈ 1 − ΔV / V_peak,   t_c ≈ θ / ω   (from the start of conduction to
                     the crest, where an ideal diode stops)
   The ripple relation takes the load current as constant and the discharge as lasting the
   whole period; here it lasts T − t_c (t_c/T ≈ 5 %) and decays with v (ΔV/V ≈ 4 %), so it
   overstates the ripple by about 5–8 %: tolerance 10 %. The conduction angle goes as √ΔV (half
   of that error) and ignores the series resistance (R·C = 28 µs against t_c ≈ 0.9 ms) and the
   end past the crest (I_load/(ω·C·V_peak) rad ≈ 0.4°): tolerance 15 %.

Tolerances of the tight comparisons (SciPy against netfold):
- Event instants 1e-8 s (5e-7 of the 20 ms period). With rtol 1e-10 the state's error is about
  3e-8 V on 325 V; an event function (a diode's voltage, or its current: a voltage over the
  path's resistance) moves at ≳ 1e3 V/s per volt of that error's scale, so SciPy places an event
  within about 1e-10 s; the leakage currents scale the error and the slope alike. The instants
  are matched both ways (each to the nearest of the other list), not as (diode, kind) pairs.
  A shift of 1 mV in every V_f, of 0.01 % in a capacitor or of 10 % in one diode's leakage
  makes the check fail.
- Waveforms 1e-6 of each observable's largest |value| (as tests/scipy_crosscheck.py); Radau's
  dense output between steps is good to about 1e-9 of the scale here.
- Peak currents 1e-6 relative; the textbook first-pulse current 1e-6 relative (the blocking
  pair's leakage, V_pk / R_off ≈ 3e-5 A, is 3e-7 of it).

Usage: scipy_rectifier.py PATH/TO/netfold
Exit status: 0 all agree, 1 a figure disagrees or netfold failed, 77 SciPy is not installed.
"""

import csv
import itertools
import json
import math
import os
import subprocess
import sys
import tempfile
import time

try:
    import numpy as np
    from scipy.integrate import solve_ivp
    from scipy.optimize import brentq
except ImportError:
    print("SKIP: scipy not installed (install python3-scipy to run the outside-reference check)")
    sys.exit(77)

RTOL_RADAU = 1e-10
ATOL_RADAU = 1e-9      # V on a state of hundreds of volts
TOL_EVENT = 1e-8       # s, see the docstring
RTOL_WAVE = 1e-6
RTOL_PEAK = 1e-6
LOOKAHEAD = 1e-9       # s, where the configuration after an event is judged
FREQ = 50.0
W = 2.0 * math.pi * FREQ
VPK = 230.0 * math.sqrt(2.0)


class Model:
    """One-state rectifier: `diodes` names, `solve(t, v, config)` returns (dv/dt, diode currents,
    diode voltages, observables) for a configuration (a tuple of booleans, True = conducting)."""

    def __init__(self, diodes, vf, solve):
        self.diodes = diodes
        self.vf = vf
        self.solve = solve

    def consistent(self, t, v, config):
        _, cur, vd, _ = self.solve(t, v, config)
        return all((cur[k] > 0.0) if on else (vd[k] < self.vf) for k, on in enumerate(config))

    def configuration_after(self, t, v, before=None, fired=None):
        """The configuration just after t (each tried with the state advanced by its own slope).
        At the start (no `before`) the consistent one, which must be unique. After diode `fired`
        crossed its threshold, the consistent one that changes the fewest diodes, `fired` among
        them: a diode changes state only when its own current or voltage crosses (the format's
        rule), so where one of two series diodes stops first, the other keeps conducting its
        partner's leakage until its own current reaches zero."""
        found = []
        for config in itertools.product((False, True), repeat=len(self.diodes)):
            if before is not None and config[fired] == before[fired]:
                continue
            dv = self.solve(t, v, config)[0]
            if self.consistent(t + LOOKAHEAD, v + LOOKAHEAD * dv, config):
                found.append(config)
        if before is not None and found:
            fewest = min(sum(a != b for a, b in zip(c, before)) for c in found)
            found = [c for c in found if sum(a != b for a, b in zip(c, before)) == fewest]
        if len(found) != 1:
            raise RuntimeError(f"{len(found)} consistent configurations at t = {t:.12g} s")
        return found[0]


class March:
    """The piecewise integration: segments (t0, t1, config, dense solution) and event instants."""

    def __init__(self, model, v0, t_end, switched_on):
        self.model = model
        self.segments = []
        self.events = []
        t, v = 0.0, v0
        config = model.configuration_after(t, v)
        if switched_on and any(config):
            self.events.append(t)  # a diode conducting from the closing instant starts there
        while True:
            funcs = [self._event(k, on, config) for k, on in enumerate(config)]
            sol = solve_ivp(lambda tt, y, c=config: [model.solve(tt, y[0], c)[0]], (t, t_end), [v],
                            method="Radau", rtol=RTOL_RADAU, atol=ATOL_RADAU, dense_output=True,
                            events=funcs, max_step=1.0 / FREQ / 40.0)
            if not sol.success:
                raise RuntimeError(f"solve_ivp failed at t = {sol.t[-1]}: {sol.message}")
            if sol.status != 1:
                self.segments.append((t, float(sol.t[-1]), config, sol.sol))
                break
            k = min((j for j in range(len(funcs)) if len(sol.t_events[j])), key=lambda j: sol.t_events[j][0])
            t1, v1 = float(sol.t_events[k][0]), float(sol.y_events[k][0][0])
            self.segments.append((t, t1, config, sol.sol))
            new = model.configuration_after(t1, v1, config, k)
            self.events.append(t1)
            t, v, config = t1, v1, new

    def _event(self, k, on, config):
        """Terminal event of diode k: its current falling through zero while it conducts, its
        voltage rising through V_f while it blocks."""
        model = self.model
        if on:
            def f(t, y):
                return model.solve(t, y[0], config)[1][k]
            f.direction = -1.0
        else:
            def f(t, y):
                return model.solve(t, y[0], config)[2][k] - model.vf
            f.direction = 1.0
        f.terminal = True
        return f

    def segment_at(self, t):
        """The segment holding t: an event instant belongs to the segment it starts."""
        seg = self.segments[0]
        for s in self.segments:
            if s[0] <= t:
                seg = s
        return seg

    def state(self, t):
        seg = self.segment_at(t)
        return float(seg[3](t)[0]), seg[2]

    def observables(self, t):
        v, config = self.state(t)
        return self.model.solve(t, v, config)[3]


# ---------------------------------------------------------------------------------------------
# Case 1 and 3: half-wave. Source v_s through R_s (and the switch) into the diode's anode b; the
# cathode p on the capacitor C ∥ R_L to the return n.
#   conducting: i = (v_s − V_f − v) / (R_s + R_on),  v_d = V_f + R_on·i
#   blocking:   i = (v_s − v) / (R_s + R_off),        v_d = R_off·i
#   C·dv/dt = i − v / R_L.  Observables: c1.v = v, r_s.i = i.

def half_wave(vpk, phase, rs, vf, ron, roff, c, rl):
    def solve(t, v, config):
        vs = vpk * math.cos(W * t + phase)
        if config[0]:
            i = (vs - vf - v) / (rs + ron)
            vd = vf + ron * i
        else:
            i = (vs - v) / (rs + roff)
            vd = roff * i
        return (i - v / rl) / c, (i,), (vd,), {"c1.v": v, "r_s.i": i}
    return Model(("d1",), vf, solve)


HALF_WAVE = dict(vpk=VPK, phase=math.radians(-120.0), rs=2.2, vf=0.9, ron=0.02, roff=10e6, c=470e-6, rl=1e3)
HALF_WAVE_NF = """title "Half-wave rectifier switched on from empty at -120 degrees"
ground n
mains: voltage-source l -> n, cosine 230 Vrms 50 Hz phase -120 deg
K1:    switch l -> a, closes at 0 s
r_s:   resistor a -> b, 2.2 ohm
d1:    diode b -> p, forward 0.9 V, on 20 mohm, off 10 Mohm
c1:    capacitor p -> n, 470 uF, initial 0 V
load:  resistor p -> n, 1 kohm
watch c1.v, r_s.i
window 0 .. 80 ms
resolution 50 us
"""

STEADY = dict(vpk=VPK, phase=0.0, rs=0.05, vf=0.8, ron=0.01, roff=10e6, c=470e-6, rl=1e3)
STEADY_NF = """title "Half-wave capacitor-input rectifier in its periodic steady state"
ground n
mains: voltage-source l -> n, cosine 230 Vrms 50 Hz
r_s:   resistor l -> b, 50 mohm
d1:    diode b -> p, forward 0.8 V, on 10 mohm, off 10 Mohm
c1:    capacitor p -> n, 470 uF
load:  resistor p -> n, 1 kohm
watch c1.v, r_s.i
window 0 .. 60 ms
resolution 50 us
"""


# ---------------------------------------------------------------------------------------------
# Case 2: bridge. Source v_s from n to c through R_s; d1 c→p, d2 m→c, d3 n→p, d4 m→n; the bulk
# capacitor C ∥ R_L from p to m, v = V_p − V_m. Each diode is a branch i_k = g_k·(V_anode −
# V_cathode − e_k) with g = 1/R_on, e = V_f conducting and g = 1/R_off,k, e = 0 blocking. With
# V_n = 0 and V_p = V_m + v the unknowns are V_c and V_m:
#   KCL at c:             (v_s − V_c)/R_s − i1 + i2 = 0
#   KCL at {p, m}:        i1 + i3 − i2 − i4 = 0     (the capacitor's current stays inside)
#   i1 = g1·(V_c − V_m − v − e1), i2 = g2·(V_m − V_c − e2), i3 = g3·(−V_m − v − e3),
#   i4 = g4·(V_m − e4)
# i.e.  [1/R_s + g1 + g2,  −g1 − g2] [V_c]   [v_s/R_s + g1·(v + e1) − g2·e2          ]
#       [g1 + g2,  −(g1 + g2 + g3 + g4)] [V_m] = [g1·(v + e1) − g2·e2 + g3·(v + e3) − g4·e4]
# (second row: i1 + i3 − i2 − i4 = 0 written out). C·dv/dt = i1 + i3 − v/R_L.
# Observables: fuse.i = (v_s − V_c)/R_s (the supply's current), bulk.v = v.

def bridge(vpk, phase, rs, vf, ron, roff, c, rl):
    def solve(t, v, config):
        vs = vpk * math.cos(W * t + phase)
        g = [1.0 / ron if on else 1.0 / roff[k] for k, on in enumerate(config)]
        e = [vf if on else 0.0 for on in config]
        a11, a12 = 1.0 / rs + g[0] + g[1], -g[0] - g[1]
        a21, a22 = g[0] + g[1], -(g[0] + g[1] + g[2] + g[3])
        b1 = vs / rs + g[0] * (v + e[0]) - g[1] * e[1]
        b2 = g[0] * (v + e[0]) - g[1] * e[1] + g[2] * (v + e[2]) - g[3] * e[3]
        det = a11 * a22 - a12 * a21
        vc = (b1 * a22 - a12 * b2) / det
        vm = (a11 * b2 - a21 * b1) / det
        vp = vm + v
        vd = (vc - vp, vm - vc, -vp, vm)
        cur = tuple(g[k] * (vd[k] - e[k]) for k in range(4))
        return (cur[0] + cur[2] - v / rl) / c, cur, vd, {"fuse.i": (vs - vc) / rs, "bulk.v": v}
    return Model(("d1", "d2", "d3", "d4"), vf, solve)


# The leakages (off resistances) differ from diode to diode. With four equal ones the two diodes
# of a conducting pair reach zero current within picoseconds of each other (the blocking pair's
# leakages cancel in the difference of their currents), so which stops first — and so when its
# partner's leakage current ends, some 10 µs to 30 µs later — would be decided by rounding.
# Unequal leakages make the order definite (the two zeros 1 ns to 4 ns apart here).
# R_s = fuse 100 mohm + r_in 2.2 ohm in series.
BRIDGE = dict(vpk=VPK, phase=0.0, rs=2.3, vf=1.0, ron=0.015, roff=(10e6, 5e6, 10e6, 5e6), c=330e-6, rl=470.0)
BRIDGE_NF = """title "Bridge rectifier closed at the crest onto an empty bulk capacitor"
ground n
mains: voltage-source l -> n, cosine 230 Vrms 50 Hz
K1:    switch l -> a, closes at 0 s
fuse:  resistor a -> b, 100 mohm
r_in:  resistor b -> c, 2.2 ohm
d1:    diode c -> p, forward 1 V, on 15 mohm, off 10 Mohm
d2:    diode m -> c, forward 1 V, on 15 mohm, off 5 Mohm
d3:    diode n -> p, forward 1 V, on 15 mohm, off 10 Mohm
d4:    diode m -> n, forward 1 V, on 15 mohm, off 5 Mohm
bulk:  capacitor p -> m, 330 uF, initial 0 V
load:  resistor p -> m, 470 ohm
watch fuse.i, bulk.v
window 0 .. 60 ms
resolution 50 us
"""


# ---------------------------------------------------------------------------------------------

class Checker:
    def __init__(self):
        self.failed = 0

    def report(self, ok, text):
        print(f"{'ok  ' if ok else 'FAIL'} {text}")
        self.failed += 0 if ok else 1

    def close(self, what, got, want, rtol=0.0, atol=0.0):
        ok = abs(got - want) <= max(rtol * abs(want), atol)
        self.report(ok, f"{what}: netfold {got:.10g}, reference {want:.10g} "
                        f"(diff {abs(got - want):.2g}, allowed {max(rtol * abs(want), atol):.2g})")


def run_netfold(binary, directory, name, text):
    path = os.path.join(directory, name + ".nf")
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(text)
    jpath, cpath = os.path.join(directory, name + ".json"), os.path.join(directory, name + ".csv")
    proc = subprocess.run([binary, "solve", path, "--json", jpath, "--csv", cpath, "--no-verify"],
                          capture_output=True, text=True)
    # Exit 1 is a rating or claim verdict; the outputs are still complete.
    if proc.returncode not in (0, 1) or not os.path.exists(jpath) or not os.path.exists(cpath):
        raise RuntimeError(f"netfold solve {name} exited {proc.returncode}: {proc.stderr.strip()}")
    with open(jpath, encoding="utf-8") as fh:
        result = json.load(fh)
    with open(cpath, encoding="utf-8", newline="") as fh:
        rows = list(csv.reader(fh))
    header = rows[0]
    data = np.array([[float(x) for x in r] for r in rows[1:] if r], dtype=float)
    columns = {h: data[:, j] for j, h in enumerate(header)}
    return result, columns


def diode_events(result, diodes):
    """Distinct instants at which netfold reports a diode event."""
    times = sorted({float(e["time"]) for s in result["segments"] for e in s.get("events", [])
                    if e.get("element") in diodes})
    return times


def compare_march(check, case, result, columns, march, observables):
    model = march.model
    # Event instants, both ways.
    ours = diode_events(result, model.diodes)
    theirs = march.events
    if not ours or not theirs:
        check.report(False, f"{case}: events netfold {len(ours)}, reference {len(theirs)}")
        return
    gap = max([min(abs(a - b) for b in theirs) for a in ours] + [min(abs(a - b) for a in ours) for b in theirs])
    check.report(gap <= TOL_EVENT, f"{case}: {len(ours)} netfold diode event instants against {len(theirs)} "
                                   f"of SciPy, largest distance {gap:.3g} s (allowed {TOL_EVENT:g} s)")
    # The configuration of every netfold segment at its midpoint.
    wrong = []
    for s in result["segments"]:
        mid = 0.5 * (float(s["from"]) + float(s["to"]))
        want = march.state(mid)[1]
        got = tuple(s["diodes"][d] == "conducting" for d in model.diodes)
        if got != want:
            wrong.append(f"{mid:.6g} s")
    check.report(not wrong, f"{case}: diode states of {len(result['segments'])} segments"
                            + (f" differ at {', '.join(wrong)}" if wrong else " agree"))
    # Waveforms at every CSV sample.
    times = columns["t"]
    reference = {name: np.empty(len(times)) for name in observables}
    for k, t in enumerate(times):
        obs = march.observables(float(t))
        for name in observables:
            reference[name][k] = obs[name]
    for name in observables:
        got = columns[name]
        err = np.abs(got - reference[name])
        k = int(np.argmax(err))
        scale = float(np.max(np.abs(reference[name])))
        rel = float(err[k]) / scale
        check.report(rel <= RTOL_WAVE, f"{case}: {name} at {len(times)} samples, max |diff| / max |value| "
                                       f"{rel:.2g} at t = {times[k]:.6g} s (allowed {RTOL_WAVE:g})")


def extreme(march, value, t_from, t_to):
    """Largest value(observables) over [t_from, t_to]: a 1 µs scan of the dense output, then a
    golden-section polish between the best sample's neighbours, within its segment."""
    grid = np.append(np.arange(t_from, t_to, 1e-6), t_to)
    vals = np.array([value(march.observables(float(t))) for t in grid])
    k = int(np.argmax(vals))
    seg = march.segment_at(grid[k])
    a, b = max(grid[max(k - 1, 0)], seg[0]), min(grid[min(k + 1, len(grid) - 1)], seg[1])
    f = lambda t: value(march.observables(t))
    g = (math.sqrt(5.0) - 1.0) / 2.0
    for _ in range(60):
        c, d = b - g * (b - a), a + g * (b - a)
        if f(c) > f(d):
            b = d
        else:
            a = c
    return max(float(vals[k]), f(0.5 * (a + b)))


def peak_of(march, name, t_from, t_to):
    return extreme(march, lambda obs: abs(obs[name]), t_from, t_to)


def min_of(march, name, t_from, t_to):
    return -extreme(march, lambda obs: -obs[name], t_from, t_to)


def case_half_wave(check, binary, directory):
    result, columns = run_netfold(binary, directory, "half_wave", HALF_WAVE_NF)
    model = half_wave(**HALF_WAVE)
    march = March(model, 0.0, 80e-3, switched_on=True)
    compare_march(check, "half-wave", result, columns, march, ("c1.v", "r_s.i"))
    # The first pulse, onto the empty capacitor, is the largest.
    check.close("half-wave: peak r_s.i", result["observables"]["r_s.i"]["peak"],
                peak_of(march, "r_s.i", 0.0, 80e-3), rtol=RTOL_PEAK)
    check.close("half-wave: peak c1.v over the window", result["observables"]["c1.v"]["peak"],
                peak_of(march, "c1.v", 0.0, 80e-3), rtol=RTOL_PEAK)


def case_bridge(check, binary, directory):
    result, columns = run_netfold(binary, directory, "bridge", BRIDGE_NF)
    model = bridge(**BRIDGE)
    march = March(model, 0.0, 60e-3, switched_on=True)
    compare_march(check, "bridge", result, columns, march, ("fuse.i", "bulk.v"))
    p = BRIDGE
    scipy_peak = peak_of(march, "fuse.i", 0.0, 60e-3)
    check.close("bridge: peak fuse.i", result["observables"]["fuse.i"]["peak"], scipy_peak, rtol=RTOL_PEAK)
    textbook = (p["vpk"] - 2.0 * p["vf"]) / (p["rs"] + 2.0 * p["ron"])
    check.close("bridge: peak fuse.i against (V_pk - 2 V_f) / (R_s + 2 R_on) [textbook]",
                result["observables"]["fuse.i"]["peak"], textbook, rtol=1e-6)
    check.report(abs(result["observables"]["fuse.i"]["t_peak"]) <= 1e-9,
                 f"bridge: the peak current is at the closing instant (netfold t_peak "
                 f"{result['observables']['fuse.i']['t_peak']:.3g} s)")
    check.close("bridge: peak bulk.v", result["observables"]["bulk.v"]["peak"],
                peak_of(march, "bulk.v", 0.0, 60e-3), rtol=RTOL_PEAK)


def case_steady(check, binary, directory):
    result, columns = run_netfold(binary, directory, "steady", STEADY_NF)
    p = STEADY
    model = half_wave(**p)
    period = 1.0 / FREQ
    # The reference's own periodic steady state: the start state whose period returns it.
    v0 = brentq(lambda x: March(model, x, period, switched_on=False).state(period)[0] - x, 0.5 * p["vpk"], p["vpk"],
                xtol=1e-11, rtol=1e-14)
    check.close("steady: c1.v at t = 0 (periodic steady state)", float(result["segments"][0]["state_start"]["c1"]),
                v0, rtol=1e-9)
    march = March(model, v0, 60e-3, switched_on=False)
    compare_march(check, "steady", result, columns, march, ("c1.v", "r_s.i"))
    check.close("steady: peak r_s.i", result["observables"]["r_s.i"]["peak"],
                peak_of(march, "r_s.i", 0.0, 60e-3), rtol=RTOL_PEAK)

    # Textbook relations against netfold's own figures over whole periods.
    obs = result["observables"]["c1.v"]
    ripple = obs["max"] - obs["min"]
    v_peak = p["vpk"] - p["vf"]
    dv_textbook = (v_peak / p["rl"]) / (FREQ * p["c"])
    check.close("steady: ripple max - min of c1.v against I_load / (f C) [textbook, approximate]",
                ripple, dv_textbook, rtol=0.10)
    check.close("steady: ripple against SciPy", ripple,
                peak_of(march, "c1.v", 0.0, 60e-3) - min_of(march, "c1.v", 0.0, 60e-3), rtol=1e-6)
    # Conduction intervals: netfold's segments in which d1 conducts, less the window's first and
    # last (cut by the window).
    spans = [float(s["to"]) - float(s["from"]) for s in result["segments"][1:-1] if s["diodes"]["d1"] == "conducting"]
    if not spans:
        check.report(False, "steady: netfold reports no complete conduction interval")
        return
    t_c = sum(spans) / len(spans)
    theta = math.acos(1.0 - dv_textbook / v_peak)
    check.close(f"steady: conduction time ({len(spans)} intervals) against acos(1 - dV/V_peak) / w "
                f"[textbook, approximate]", t_c, theta / W, rtol=0.15)
    ref_spans = [t1 - t0 for t0, t1, config, _ in march.segments[1:-1] if config == (True,)]
    check.close("steady: conduction time against SciPy", t_c, sum(ref_spans) / len(ref_spans), atol=2 * TOL_EVENT)


def main():
    if len(sys.argv) != 2:
        print(__doc__)
        return 2
    binary = sys.argv[1]
    check = Checker()
    start = time.time()
    with tempfile.TemporaryDirectory(prefix="netfold-scipy-rect-") as directory:
        for case in (case_half_wave, case_bridge, case_steady):
            try:
                case(check, binary, directory)
            except (RuntimeError, OSError, ValueError, KeyError, IndexError) as e:
                check.report(False, f"{case.__name__}: {e}")
    print(f"{'FAIL' if check.failed else 'PASS'}: {check.failed} figure(s) disagree "
          f"({time.time() - start:.1f} s)")
    return 1 if check.failed else 0


if __name__ == "__main__":
    sys.exit(main())
