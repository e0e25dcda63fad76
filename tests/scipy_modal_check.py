#!/usr/bin/python3
"""Outside-reference check of the modal closed form (src/response/modal.hpp) with SciPy.

Each problem is a state equation dx/dt = A·x + B·u(t), x(t0) = x0, with inputs made of a DC
value and phasors. The script hands it to the test driver `modal_probe` (JSON in, the states at
the requested times out) and compares every state with two SciPy references:

  expm   the exponential of the matrix augmented with the inputs as states (1 for DC; cos ωt and
         sin ωt per frequency), balanced first with scipy.linalg.matrix_balance (the balancing
         keeps badly scaled matrices accurate) — source: scipy.linalg.expm (Al-Mohy & Higham
         scaling and squaring), scipy.linalg.matrix_balance (SciPy 1.10);
  Radau  scipy.integrate.solve_ivp(method="Radau", rtol=1e-12) on the same equations, with the
         exact Jacobian — source: scipy.integrate.solve_ivp (SciPy 1.10).

A state passes when max |netfold − ref| / max |ref| ≤ 1e-9 against expm and ≤ 1e-7 against
Radau (its own global error at rtol 1e-12 is of order 1e-10 … 1e-9), the scale floored at 1e-6 of
the problem's largest state. The problems: random stable systems of 2, 10 and 200 states, and the
hard cases of the several-storage-elements issue (critical damping, a coil into a snubber, a 10⁹
stiffness spread, λ = 0 drift, resonance, a nearly defective matrix, a lightly damped LC ladder).

Usage: scipy_modal_check.py PATH/TO/modal_probe
Exit status: 0 all agree, 1 a problem disagrees or the driver failed, 77 SciPy is not installed
(CTest treats 77 as a skip).
"""

import json
import math
import subprocess
import sys

try:
    import numpy as np
    from scipy.integrate import solve_ivp
    from scipy.linalg import expm, matrix_balance
except ImportError:
    print("SKIP: scipy not installed (install python3-scipy to run the outside-reference check)")
    sys.exit(77)

TOL_EXPM = 1e-9
TOL_RADAU = 1e-7
FLOOR = 1e-6
TWO_PI = 2.0 * math.pi


def problem(name, a, b, x0, inputs, t0, t1, points=40, radau=True):
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float).reshape(a.shape[0], -1)
    return {"name": name, "a": a, "b": b, "x0": np.asarray(x0, dtype=float), "inputs": inputs,
            "t0": t0, "t1": t1, "times": np.linspace(t0, t1, points), "radau": radau}


def augmented(p):
    """The matrix of (x, 1, cos ω₁t, sin ω₁t, …) and that state at t0."""
    n = p["a"].shape[0]
    freqs = sorted({ph[0] for u in p["inputs"] for ph in u.get("phasors", [])})
    size = n + 1 + 2 * len(freqs)
    m = np.zeros((size, size))
    m[:n, :n] = p["a"]
    z0 = np.zeros(size)
    z0[:n] = p["x0"]
    z0[n] = 1.0
    for i, u in enumerate(p["inputs"]):
        m[:n, n] += p["b"][:, i] * u.get("dc", 0.0)
    for k, f in enumerate(freqs):
        c, s, w = n + 1 + 2 * k, n + 2 + 2 * k, TWO_PI * f
        m[c, s], m[s, c] = -w, w          # d/dt cos = −ω sin, d/dt sin = ω cos
        z0[c], z0[s] = math.cos(w * p["t0"]), math.sin(w * p["t0"])
        for i, u in enumerate(p["inputs"]):
            for fr, re, im in u.get("phasors", []):
                if fr == f:                # Re((re + j·im)·e^{jωt}) = re·cos ωt − im·sin ωt
                    m[:n, c] += p["b"][:, i] * re
                    m[:n, s] -= p["b"][:, i] * im
    return m, z0


def reference_expm(p):
    m, z0 = augmented(p)
    n = p["a"].shape[0]
    out = []
    for t in p["times"]:
        bal, tr = matrix_balance(m * (t - p["t0"]), permute=False, separate=True)
        scale = tr[0]
        e = (scale[:, None] * expm(bal)) / scale[None, :]
        out.append((e @ z0)[:n])
    return np.array(out)


def reference_radau(p):
    m, z0 = augmented(p)
    n = p["a"].shape[0]
    sol = solve_ivp(lambda t, z: m @ z, (p["t0"], p["t1"]), z0, method="Radau", t_eval=p["times"],
                    rtol=1e-12, atol=1e-14 * max(1.0, np.abs(z0).max()), jac=lambda t, z: m)
    if not sol.success:
        raise RuntimeError("Radau failed: " + sol.message)
    return sol.y[:n].T


def run_probe(probe, p):
    doc = {"a": p["a"].tolist(), "b": p["b"].tolist(), "x0": p["x0"].tolist(), "inputs": p["inputs"],
           "t0": p["t0"], "t1": p["t1"], "times": p["times"].tolist()}
    res = subprocess.run([probe], input=json.dumps(doc), capture_output=True, text=True, timeout=300)
    if res.returncode != 0:
        raise RuntimeError("modal_probe exited %d: %s" % (res.returncode, res.stderr.strip()))
    return json.loads(res.stdout)


def worst(got, ref):
    floor = FLOOR * np.abs(ref).max()
    scale = np.maximum(np.abs(ref).max(axis=0), floor)
    return float((np.abs(got - ref).max(axis=0) / scale).max())


def random_stable(n, seed):
    rng = np.random.default_rng(seed)
    a = rng.standard_normal((n, n)) / math.sqrt(n) - 1.2 * np.eye(n)
    b = rng.standard_normal((n, 2))
    x0 = rng.standard_normal(n)
    inputs = [{"dc": 1.5, "phasors": [[0.7, 0.4, -0.3]]}, {"dc": 0.0, "phasors": [[0.7, 1.0, 0.0], [2.3, 0.0, 0.5]]}]
    return problem("random n=%d" % n, a, b, x0, inputs, 0.5, 6.5)


def lc_ladder(n_sections, r_load):
    """An LC ladder (L = 1 mH, C = 1 µF per section) fed from a 50 Hz source, a resistor at the end;
    states (i₁, v₁, i₂, v₂, …)."""
    l, c = 1e-3, 1e-6
    n = 2 * n_sections
    a = np.zeros((n, n))
    for k in range(n_sections):
        i, v = 2 * k, 2 * k + 1
        a[i, v] = -1 / l                  # L·di_k/dt = v_{k−1} − v_k
        if k > 0:
            a[i, v - 2] = 1 / l
        a[v, i] = 1 / c                   # C·dv_k/dt = i_k − i_{k+1} (− v/R at the end)
        if k + 1 < n_sections:
            a[v, i + 2] = -1 / c
    a[n - 1, n - 1] = -1 / (r_load * c)
    b = np.zeros((n, 1))
    b[0, 0] = 1 / l
    return problem("LC ladder %d sections" % n_sections, a, b, np.zeros(n),
                   [{"dc": 0.0, "phasors": [[50.0, 325.0, 0.0]]}], 0.0, 0.02, points=200)


def hard_cases():
    l, c = 10e-3, 1e-6
    r = 2 * math.sqrt(l / c)
    rlc = [[-r / l, -1 / l], [1 / c, 0.0]]
    yield problem("critically damped RLC", rlc, [[1 / l], [0.0]], [0.0, 0.0], [{"dc": 100.0}], 0.0, 2e-3)
    yield problem("coil 1 H 10 ohm into 10 nF", [[-10.0, -1.0], [1e8, 0.0]], [[0.0], [0.0]], [2.4, 0.0],
                  [{"dc": 0.0}], 0.0, 2e-3, points=200)
    k = 2.0 ** 20
    yield problem("stiffness 1e9", [[-2.0, 1 / k], [1e9 * k, -1e9 - 1.0]], [[1.0], [0.0]], [1.0, 3e5 * k],
                  [{"dc": 2.0}], 0.0, 5.0)
    c1, c2, rr = 1e-6, 4.7e-6, 1e3
    yield problem("lambda = 0 drift", [[-1 / (rr * c1), 1 / (rr * c1)], [1 / (rr * c2), -1 / (rr * c2)]],
                  [[1 / c1], [0.0]], [3.0, -1.0], [{"dc": 2e-3}], 0.0, 0.05)
    w0 = 1 / math.sqrt(1e-3 * 1e-6)
    yield problem("resonance", [[0.0, -1e3], [1e6, 0.0]], [[1e3], [0.0]], [0.0, 0.0],
                  [{"dc": 0.0, "phasors": [[w0 / TWO_PI, 10.0, 0.0]]}], 0.0, 0.02, points=400)
    j = np.array([[-1.0, 1.0, 0.0], [0.0, -1.0 + 1e-9, 1.0], [0.0, 0.0, -1.0 + 2e-9]])
    s = np.array([[1.0, 2.0, 0.0], [0.0, 1.0, 1.0], [1.0, 0.0, 1.0]])
    yield problem("nearly defective 3x3", s @ j @ np.linalg.inv(s), [[0.0], [1.0], [1.0]], [1.0, -2.0, 0.5],
                  [{"dc": 3.0}], 0.0, 6.0)
    yield lc_ladder(5, 50.0)


def main():
    if len(sys.argv) != 2:
        print("usage: scipy_modal_check.py PATH/TO/modal_probe", file=sys.stderr)
        return 2
    probe = sys.argv[1]
    cases = [random_stable(2, 1), random_stable(10, 2), random_stable(200, 3)] + list(hard_cases())
    failed = 0
    for p in cases:
        res = run_probe(probe, p)
        got = np.array(res["states"], dtype=float)
        line = "%-28s n=%-4d" % (p["name"], p["a"].shape[0])
        if not res["ok"]:
            print("FAIL %s: flagged: %s" % (line, res["reason"]))
            failed += 1
            continue
        e_expm = worst(got, reference_expm(p))
        ok = e_expm <= TOL_EXPM
        line += " expm %.1e" % e_expm
        if p["radau"]:
            e_radau = worst(got, reference_radau(p))
            ok = ok and e_radau <= TOL_RADAU
            line += "  Radau %.1e" % e_radau
        line += "  (estimate %.1e)" % res["estimated_error"]
        print(("ok   " if ok else "FAIL ") + line)
        failed += 0 if ok else 1
    print("%d passed, %d failed" % (len(cases) - failed, failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
