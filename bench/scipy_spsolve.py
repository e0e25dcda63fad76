#!/usr/bin/python3
"""Times scipy.sparse.linalg.spsolve on a system exported by bench_spsolve (issue 7 (d)).

    /usr/bin/python3 bench/scipy_spsolve.py G.mtx B.mtx [--reference X.mtx] [--repeat 3]

Reads G (sparse) and B (dense, one column per input) from Matrix Market files, converts G to
CSC outside the timing (spsolve's own format), then times spsolve(G, B) --repeat times and prints
one `key value` line each:

    scipy_version 1.10.1
    spsolve_seconds_median 12.3
    spsolve_seconds_all 12.1 12.3 12.9
    relative_residual 3.1e-16            ||G·X − B||_F / ||B||_F
    max_rel_diff_vs_reference 2.2e-15    max |X − X_ref| / max |X_ref|, with --reference
    reference_relative_residual 4e-16    ||G·X_ref − B||_F / ||B||_F, with --reference

Run it with Debian's interpreter, /usr/bin/python3, which has python3-scipy.
"""
import argparse
import statistics
import sys
import time

import numpy as np
import scipy
import scipy.io
import scipy.sparse
import scipy.sparse.linalg


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("matrix")
    ap.add_argument("rhs")
    ap.add_argument("--reference", help="the solution to compare with (Matrix Market, dense)")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--permc-spec", default=None,
                    help="SuperLU column ordering (spsolve's default is COLAMD)")
    args = ap.parse_args()

    g = scipy.io.mmread(args.matrix).tocsc()
    b = np.asarray(scipy.io.mmread(args.rhs), dtype=float)
    kwargs = {} if args.permc_spec is None else {"permc_spec": args.permc_spec}

    times = []
    x = None
    for _ in range(max(1, args.repeat)):
        t0 = time.perf_counter()
        x = scipy.sparse.linalg.spsolve(g, b, **kwargs)
        times.append(time.perf_counter() - t0)
    x = np.asarray(x).reshape(b.shape)

    print(f"scipy_version {scipy.__version__}")
    print(f"unknowns {g.shape[0]}")
    print(f"spsolve_seconds_median {statistics.median(times):.6g}")
    print("spsolve_seconds_all " + " ".join(f"{t:.6g}" for t in times))
    print(f"relative_residual {np.linalg.norm(g @ x - b) / np.linalg.norm(b):.3g}")
    if args.reference:
        ref = np.asarray(scipy.io.mmread(args.reference), dtype=float).reshape(b.shape)
        print(f"max_rel_diff_vs_reference {np.max(np.abs(x - ref)) / np.max(np.abs(ref)):.3g}")
        print(f"reference_relative_residual {np.linalg.norm(g @ ref - b) / np.linalg.norm(b):.3g}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
