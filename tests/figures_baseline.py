#!/usr/bin/env python3
"""Every figure of every .nf file in the repository, before and after a rework of the engine.

`record` runs `solve --json`, `worst --json` and `equiv --json` on every tracked .nf file and
stores exit status and output in tests/data/figures_baseline.json. `compare` runs them again
and fails on any difference beyond 1e-12 relative (the floor of a number is 1e-12 of the
largest magnitude in the same JSON object, so that a rounding zero such as 2e-17 beside 345 is
not compared relatively), on a changed exit status, or on a changed text.

A figure changed on purpose (a wrong answer fixed) is listed in INTENDED_CHANGES with its
reason; the closing note of the change lists the same entries.

Usage: figures_baseline.py (record|compare) NETFOLD_BINARY [SOURCE_DIR]
"""
import fnmatch
import json
import math
import os
import subprocess
import sys

BASELINE = os.path.join("tests", "data", "figures_baseline.json")
COMMANDS = {
    "solve": ["solve", "{file}", "--json", "-", "--no-verify"],
    "worst": ["worst", "{file}", "--json", "-"],
    "equiv": ["equiv", "{file}", "--json", "-"],
}
REL = 1e-12

# (file glob, command, JSON path glob) -> why the figure changed on purpose.
# Baseline files removed on purpose, each with its reason.
REMOVED_FILES = {
    "tests/degenerate/two_storage_elements.nf": "issue 14: two storage elements are solved now; the "
    "catalogue case became tests/degenerate/parallel_capacitors.nf (a capacitor loop, still refused)",
}

INTENDED_CHANGES = {
    # Issue 12 item 5: prefixed values convert exactly (470 nF is now the double nearest
    # 4.7e-7, not 470 × 1e-9), which moves the last bits of every figure. Where several
    # arguments or instants give the same extreme (a symmetric ±90° worst case, a power that is
    # 0 at every current zero, AC crests of equal height), the last bits pick another of the tied
    # arguments; the extremes themselves are unchanged to 1e-12.
    ("netlists/cap_reclose.nf", "worst", "/json/sweeps/0/ratings/*/at"): "issue 12 item 5: tied argument",
    ("netlists/cap_reclose.nf", "worst", "/json/sweeps/0/results/*/at"): "issue 12 item 5: tied argument",
    ("netlists/cap_reclose.nf", "worst", "/json/sweeps/0/results/C1.v/best_at"): "issue 12 item 5: tied argument",
    ("netlists/cap_reclose.nf", "worst", "/json/sweeps/0/results/C1.v/t_peak"): "issue 12 item 5: tied crests",
    ("netlists/night_light_dropper.nf", "solve", "/json/observables/R_inrush.p/t_min"):
        "issue 12 item 5: the power is 0 at every current zero; another of them is reported",
    ("netlists/night_light_dropper.nf", "worst", "/json/sweeps/0/ratings/*/at"): "issue 12 item 5: tied argument",
    ("netlists/night_light_dropper.nf", "worst", "/json/sweeps/0/results/C1.v/at"):
        "issue 12 item 5: +90° and -90° give the same worst case",
    ("netlists/night_light_dropper.nf", "worst", "/json/sweeps/0/results/C1.v/best_at"): "issue 12 item 5: tied argument",
    ("netlists/ramp_integrator.nf", "solve", "/json/observables/C_t.v/t_min"):
        "issue 12 item 5: 10 mV at t = 0 and 10 mV + 2 V·e^-50 at 25 ms tie in double precision",
    # Refined coefficients (issue 12 item 7) move the last bits of figures too: ties as above.
    ("tests/fuzz/regressions/million_periods_slow_peak_search.nf", "solve", "/json/observables/C1.v/t_*"):
        "issue 12 item 8: equal crests of the periodic steady state; the first is now reported",
    ("tests/degenerate/sinusoid_faster_than_resolution.nf", "solve", "/json/observables/C1.v/t_*"):
        "issue 12 item 8: equal crests of the periodic steady state; the first is now reported",
    ("netlists/ct_burden.nf", "solve", "/json/warnings"):
        "issue 12 messages: the caution that an ideal contact breaks an AC inductor current away from its zero",
    ("netlists/heater_contactor.nf", "solve", "/json/warnings"):
        "issue 12 messages: the caution that an ideal contact breaks an AC inductor current away from its zero",
    ("netlists/valve_coil.nf", "solve", "/json/warnings"):
        "issue 12 messages: the caution that an ideal contact breaks an AC inductor current away from its zero",
    ("tests/degenerate/resistances_span_600_decades.nf", "*", "/error"):
        "issue 12 item 7: the documented resistance span is now 1e13 (refined solve), the message says so",
    # Second edition syntax: the lists in these two messages name the new kind and claims.
    ("netlists/bad/unknown_kind.nf", "*", "/error"): "spec v2: the list of kinds names 'diode'",
    ("netlists/bad/attribute_not_taken.nf", "*", "/error"): "spec v2: the resistor's attribute list names rated-i2t, tolerance",
    ("netlists/bad/repeated_attribute.nf", "*", "/error"):
        "spec v2: the capacitor's attribute list names rated-dvdt, rated-rms, rated-i2t, tolerance",
    ("netlists/bad/unknown_claim.nf", "*", "/error"):
        "spec v2: the list of claim quantities names frequency, damping, share peak, time-below, dvdt, didt, rms, power",
    # issue 12 item 11: one verdict per file. The engine step every command runs (solve())
    # now refuses what `solve` refused in its report only: a figure beyond double precision,
    # a watched observable undefined in some segment; `equiv` and `worst` no longer answer.
    ("tests/fuzz/regressions/huge_source_energy_overflow.nf", "equiv", "*"):
        "issue 12 item 11: refused by every command (the energy of C1 overflows)",
    ("tests/fuzz/regressions/huge_source_energy_overflow.nf", "worst", "*"):
        "issue 12 item 11: refused by every command (the energy of C1 overflows)",
    ("tests/degenerate/floating_node_watched.nf", "equiv", "*"):
        "issue 12 item 11: refused by every command (a watched node floats)",
    ("tests/degenerate/floating_node_watched.nf", "worst", "*"):
        "issue 12 item 11: refused by every command (a watched node floats)",
    ("tests/degenerate/watched_node_floats_when_open.nf", "equiv", "*"):
        "issue 12 item 11: refused by every command (a watched node floats while K1 is open)",
    ("tests/degenerate/watched_node_floats_when_open.nf", "worst", "*"):
        "issue 12 item 11: refused by every command (a watched node floats while K1 is open)",
    # Issue 12 item 6 (ratings, spec v2): new fields of every rating line.
    ("netlists/*.nf", "solve", "/json/ratings/*/where"):
        "new field: where the rated figure occurs (the time of a peak, the segment of a mean power)",
    ("netlists/*.nf", "worst", "/json/ratings/*/where"):
        "new field: where the rated figure occurs (the time of a peak, the segment of a mean power)",
    ("netlists/*.nf", "solve", "/json/ratings/*/worst_at"):
        "new field: the sweep argument of a worst-case rating (null at the nominal values)",
    ("netlists/*.nf", "worst", "/json/ratings/*/worst_at"):
        "new field: the sweep argument of a worst-case rating (null at the nominal values)",
    # Issue 12 item 6: `rated P` is the largest steady-state mean power over the segments.
    ("netlists/heater_contactor.nf", "solve", "/json/ratings/3/*"):
        "R_heater mean power 0 W -> 1.966 kW: the steady state while the contactor is closed (segment 1), "
        "not the last segment's (contactor open)",
    ("netlists/heater_contactor.nf", "worst", "/json/ratings/3/*"):
        "R_heater mean power 0 W -> 1.966 kW: the steady state while the contactor is closed (segment 1), "
        "not the last segment's (contactor open)",
    ("netlists/snubber_contact.nf", "solve", "/json/ratings/0/*"):
        "R_load mean power 20.4 W (the window's mean) -> 96 W, (48 V)^2 / 24 ohm while the contact is closed",
    ("netlists/snubber_contact.nf", "worst", "/json/ratings/0/*"):
        "R_load mean power 20.4 W (the window's mean) -> 96 W, (48 V)^2 / 24 ohm while the contact is closed",
    ("netlists/relay_flyback.nf", "solve", "/json/ratings/0/*"):
        "R_fly mean power 415 mW (the window's mean) -> 575 mW while Q1 is on; the file's rating raised "
        "from 0.5 W (exceeded under the v2 rule) to 1 W",
    ("netlists/relay_flyback.nf", "worst", "/json/ratings/0/*"):
        "R_fly mean power 415 mW (the window's mean) -> 575 mW while Q1 is on; the file's rating raised "
        "from 0.5 W (exceeded under the v2 rule) to 1 W",
    ("netlists/coil_reclose.nf", "worst", "/json/*ratings/1/*"):
        "R_fw mean power 7.30 W (the window's mean, worst over the residual current) -> 5.76 W, "
        "(24 V)^2 / 100 ohm while the contact is closed, the same at every argument",
    ("netlists/valve_coil.nf", "worst", "/json/*ratings/2/*"):
        "free_r mean power 0 W -> 1.226 W, (24 V)^2 / 470 ohm while K1 is closed; the file's rating raised "
        "from 0.5 W (exceeded under the v2 rule) to 2 W",
    # Issue 12 item 6: with sweeps declared, solve rates the worst case over them.
    ("netlists/valve_coil.nf", "solve", "/json/ratings/*"):
        "solve rates the worst case over supply.phase (K1 894 mA -> 1.062 A, coil_l 858 mA -> 1.021 A) and "
        "free_r's steady-state power (0 W -> 1.226 W, rated 2 W)",
    ("netlists/coil_reclose.nf", "solve", "/json/ratings/*"):
        "solve rates the worst case over coil_l.initial (K1 2.239 A -> 2.24 A, coil_l 1.9993 A -> 2 A) and "
        "R_fw's steady-state power (7.24 W -> 5.76 W)",
    ("netlists/cap_reclose.nf", "solve", "/json/ratings/*"):
        "solve rates the worst case over the three sweeps (K1 45.9 A -> 65.0 A, R_damp 2.19 J -> 3.78 J, "
        "C1 325.08 V -> 325.11 V)",
    ("netlists/night_light_dropper.nf", "solve", "/json/ratings/*"):
        "solve rates the worst case over mains.phase (R_inrush energy 9.63 mJ -> 9.69 mJ, C1 290.1 V -> 292.2 V)",
    ("netlists/harmonic_supply.nf", "solve", "/json/ratings/*"):
        "solve rates the worst case over supply.phase (K1 and L_line 24.04 A -> 25.24 A, issue 12 item 4)",
    # Issue 16: new fields of every sweep (spec v2), added beside the first-edition figures.
    ("*.nf", "worst", "/json/sweeps/*/results/*/distribution"):
        "new field: the peak's distribution over the sweep (p50, p90, p99)",
    ("*.nf", "worst", "/json/sweeps/*/exceeded_share"): "new field: each rating's exceeded share of the sweep",
    # Issue 17: the example library's parts carry the v2 ratings they would have (an X
    # capacitor's dv/dt, the voltage across an open relay contact): one more rating each.
    ("netlists/night_light_dropper.nf", "*", "/json/ratings"): "issue 17: C1 rated-dvdt added",
    ("netlists/night_light_dropper.nf", "worst", "/json/sweeps/0/ratings"): "issue 17: C1 rated-dvdt added",
    ("netlists/snubber_contact.nf", "*", "/json/ratings"): "issue 17: K1 rated V added",
    ("*.nf", "solve", "/json/storage_elements"): "new field (spec v2): every storage element, beside 'storage'",
    ("*.nf", "solve", "/json/segments/*/events"): "new field (spec v2): per segment what started it, with exact times",
    # Issue 12 item 4: a phase sweep of a source with harmonics is a time shift.
    ("netlists/harmonic_supply.nf", "worst", "/json/*"):
        "supply.phase moves the 150 Hz and 250 Hz terms by 3x and 5x the angle (a time shift): worst "
        "L_line.i 24.85 A at 67.9 deg -> 25.24 A at -90 deg, @b 248.5 V -> 252.4 V",
}

# The argument of a smooth maximum found by golden-section search is fixed only to about √ε of
# the range (the value there is flat to second order): `at` fields are compared to 1e-6.
ARGUMENT_KEYS = ("at", "worst_at", "best_at")
ARGUMENT_REL = 1e-6


def nf_files(source_dir):
    out = subprocess.run(["git", "ls-files", "*.nf"], cwd=source_dir, capture_output=True, text=True, check=True)
    return sorted(line for line in out.stdout.splitlines() if line)


def run_all(binary, source_dir):
    figures = {}
    for f in nf_files(source_dir):
        entry = {}
        for name, args in COMMANDS.items():
            argv = [binary] + [a.format(file=f) for a in args]
            p = subprocess.run(argv, cwd=source_dir, capture_output=True, text=True, errors="replace", timeout=300)
            result = {"exit": p.returncode}
            if p.returncode in (0, 1) and p.stdout.strip().startswith("{"):
                result["json"] = json.loads(p.stdout)
            else:
                result["error"] = p.stderr.strip().splitlines()[0] if p.stderr.strip() else ""
            entry[name] = result
        figures[f] = entry
    return figures


def intended(file, command, path):
    for (fglob, cmd, pglob), why in INTENDED_CHANGES.items():
        if fnmatch.fnmatch(command, cmd) and fnmatch.fnmatch(file, fglob) and fnmatch.fnmatch(path, pglob):
            return why
    return None


def object_scale(obj):
    if isinstance(obj, dict):
        values = obj.values()
    elif isinstance(obj, list):
        values = obj
    else:
        return 0.0
    return max((abs(v) for v in values if isinstance(v, (int, float)) and not isinstance(v, bool)), default=0.0)


def compare_values(old, new, path, scale, diffs):
    if isinstance(old, dict) and isinstance(new, dict):
        s = object_scale(old)
        for k in sorted(set(old) | set(new)):
            if k not in old or k not in new:
                diffs.append((f"{path}/{k}", old.get(k, "<absent>"), new.get(k, "<absent>")))
            elif k in ARGUMENT_KEYS and isinstance(old[k], (int, float)) and isinstance(new[k], (int, float)):
                if abs(old[k] - new[k]) > ARGUMENT_REL * max(abs(old[k]), abs(new[k]), s):
                    diffs.append((f"{path}/{k}", old[k], new[k]))
            else:
                compare_values(old[k], new[k], f"{path}/{k}", s, diffs)
    elif isinstance(old, list) and isinstance(new, list):
        if len(old) != len(new):
            diffs.append((path, f"{len(old)} items", f"{len(new)} items"))
            return
        s = object_scale(old)
        for i, (a, b) in enumerate(zip(old, new)):
            compare_values(a, b, f"{path}/{i}", s, diffs)
    elif isinstance(old, bool) or isinstance(new, bool) or isinstance(old, str) or old is None or new is None:
        if old != new:
            diffs.append((path, old, new))
    elif isinstance(old, (int, float)) and isinstance(new, (int, float)):
        floor = REL * scale
        if not (abs(old - new) <= REL * max(abs(old), abs(new)) or abs(old - new) <= floor):
            diffs.append((path, old, new))
    elif old != new:
        diffs.append((path, old, new))


def main():
    if len(sys.argv) < 3 or sys.argv[1] not in ("record", "compare"):
        print(__doc__)
        return 2
    mode, binary = sys.argv[1], os.path.abspath(sys.argv[2])
    source_dir = sys.argv[3] if len(sys.argv) > 3 else "."
    figures = run_all(binary, source_dir)
    path = os.path.join(source_dir, BASELINE)
    if mode == "record":
        with open(path, "w") as fh:
            json.dump(figures, fh, indent=1, sort_keys=True)
            fh.write("\n")
        print(f"recorded {len(figures)} files")
        return 0
    with open(path) as fh:
        baseline = json.load(fh)
    failed = passed = 0
    for f in sorted(set(baseline) | set(figures)):
        if f not in baseline:
            # A file added after the baseline: nothing to compare against.
            continue
        if f not in figures and f in REMOVED_FILES:
            continue
        if f not in figures:
            print(f"FAIL {f}: in the baseline but no longer in the repository")
            failed += 1
            continue
        for command in COMMANDS:
            diffs = []
            compare_values(baseline[f][command], figures[f][command], "", 0.0, diffs)
            unexplained = [d for d in diffs if not intended(f, command, d[0])]
            if unexplained:
                failed += 1
                print(f"FAIL {f} {command}:")
                for p, a, b in unexplained[:12]:
                    print(f"    {p}: {a!r} -> {b!r}")
                if len(unexplained) > 12:
                    print(f"    ... and {len(unexplained) - 12} more")
            else:
                passed += 1
    print(f"{passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
