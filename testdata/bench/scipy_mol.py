"""Reference method of lines for the massline benchmark, run side by side.

A conventional second-order finite-volume discretisation on a uniform grid
(cell-centred, exact spherical shell volumes and face areas, the surface
flux through a half-cell distance), integrated with scipy's solve_ivp (BDF
with a sparse banded Jacobian, LSODA with the banded Jacobian), in-process.
One extra unknown accumulates the amount that entered through the surface;
it couples only to the last cell, so the Jacobian stays tridiagonal.

Problems (the same as massline's `massline bench`):
  P1  sphere, a = 1 mm, D = 1e-9 m^2/s, film with Biot number 10,
      bulk 1 mol/m^3: uptake fraction at 10, 100, 1000 s
  P2  sphere, fixed surface value 1 mol/m^3, first-order consumption
      k = 0.01 1/s: amount absorbed at 100 and 1000 s
  P3  P1 with Langmuir sorption in the accumulation term: the amount held
      per volume is q(c) = 0.4 c + 10*2 c/(1 + 2 c) (porosity 0.4,
      rho*q_max = 10 mol/m^3, K_L = 2 m^3/mol); uptake fraction
      sum(V q(c)) / (V q(1)) at 10, 100, 1000 s. Written the textbook way,
      with the concentration as unknown: dc/dt = (net inflow / V) / q'(c)
      (a formulation independent of massline's, whose unknown is q), with
      the exact tridiagonal Jacobian.

Usage: scipy_mol.py PROBLEM REFERENCE_JSON [CELLS]
       scipy_mol.py P3-reference [CELLS]
  REFERENCE_JSON: {"times": [...], "values": [...], "scale": s}; the
  computed quantity (uptake fraction for P1, absorbed amount / scale for
  P2) is compared with "values".
Prints a JSON list of {method, cells, rtol, seconds, error}. The second
form prints the P3 uptake fractions on uniform grids of CELLS (default
800,1600,3200) cells at rtol 1e-10 (BDF) and their Richardson extrapolation
from the two finest (second order: F + (F - F_coarse)/3), as JSON, for the
cross-check of massline's reference values.
Note (LIBRARIES.md): Debian's scipy 1.10 LSODA with a banded Jacobian needs
one padding row in the Jacobian array; we add it.
"""
import json
import sys
import time

import numpy as np
from scipy.integrate import solve_ivp
from scipy.sparse import diags


def build(n, problem):
    a, D = 1e-3, 1e-9
    faces = np.linspace(0.0, a, n + 1)
    vol = 4.0 / 3.0 * np.pi * (faces[1:] ** 3 - faces[:-1] ** 3)
    area = 4.0 * np.pi * faces ** 2
    dr = a / n
    tr = D * area[1:-1] / dr  # between neighbouring cell centres
    if problem == "P1":
        kf = 10.0 * D / a  # Biot number kf a / D = 10
        tsurf = area[-1] / (1.0 / kf + 0.5 * dr / D)
        k = 0.0
    else:
        tsurf = D * area[-1] / (0.5 * dr)
        k = 0.01
    cb = 1.0
    m = n + 1  # cells and the absorbed-amount accumulator
    diag = np.zeros(m)
    up = np.zeros(m)  # d f_i / d y_{i+1}
    lo = np.zeros(m)  # d f_i / d y_{i-1}
    for i in range(n):
        if i > 0:
            diag[i] -= tr[i - 1] / vol[i]
            lo[i] = tr[i - 1] / vol[i]
        if i < n - 1:
            diag[i] -= tr[i] / vol[i]
            up[i] = tr[i] / vol[i]
        diag[i] -= k
    diag[n - 1] -= tsurf / vol[n - 1]
    lo[n] = -tsurf  # q' = tsurf (cb - c_{n-1})
    rhs = np.zeros(m)
    rhs[n - 1] = tsurf / vol[n - 1] * cb
    rhs[n] = tsurf * cb

    def f(t, y):
        dy = diag * y + rhs
        dy[1:] += lo[1:] * y[:-1]
        dy[:-1] += up[:-1] * y[1:]
        return dy

    J = diags([lo[1:], diag, up[:-1]], [-1, 0, 1], format="csc")
    band = np.zeros((4, m))  # rows: upper, diagonal, lower, padding
    band[0, 1:] = up[:-1]
    band[1, :] = diag
    band[2, :-1] = lo[1:]
    return f, J, band, vol


EPS, QMAX, KL = 0.4, 10.0, 2.0


def store(c):
    """Amount held per volume q(c), q'(c) and q''(c) for P3."""
    den = 1.0 + KL * c
    return EPS * c + QMAX * KL * c / den, EPS + QMAX * KL / den ** 2, -2.0 * QMAX * KL * KL / den ** 3


def build_p3(n):
    """P3 with the concentration as unknown; returns f, the sparse and the
    banded Jacobian as functions of y, and the uptake fraction of a
    solution."""
    a, D = 1e-3, 1e-9
    faces = np.linspace(0.0, a, n + 1)
    vol = 4.0 / 3.0 * np.pi * (faces[1:] ** 3 - faces[:-1] ** 3)
    area = 4.0 * np.pi * faces ** 2
    dr = a / n
    tr = D * area[1:-1] / dr
    kf = 10.0 * D / a
    tsurf = area[-1] / (1.0 / kf + 0.5 * dr / D)
    cb = 1.0
    lo = np.zeros(n)  # d net_i / d c_{i-1}
    up = np.zeros(n)  # d net_i / d c_{i+1}
    lo[1:] = tr
    up[:-1] = tr
    dg = -(lo + up)
    dg[-1] -= tsurf

    def net(c):
        r = dg * c
        r[1:] += lo[1:] * c[:-1]
        r[:-1] += up[:-1] * c[1:]
        r[-1] += tsurf * cb
        return r / vol

    def f(t, c):
        _, q1, _ = store(c)
        return net(c) / q1

    def parts(c):
        _, q1, q2 = store(c)
        d = dg / vol / q1 - net(c) * q2 / q1 ** 2
        return d, lo[1:] / vol[1:] / q1[1:], up[:-1] / vol[:-1] / q1[:-1]

    def jac_sparse(t, c):
        d, l, u = parts(c)
        return diags([l, d, u], [-1, 0, 1], format="csc")

    def jac_band(t, c):
        d, l, u = parts(c)
        band = np.zeros((4, n))  # rows: upper, diagonal, lower, padding
        band[0, 1:] = u
        band[1, :] = d
        band[2, :-1] = l
        return band

    full = vol.sum() * store(cb)[0]

    def uptake(y):
        return (vol @ store(y)[0]) / full

    return f, jac_sparse, jac_band, uptake


def solve_p3(n, method, rtol, times):
    f, js, jb, uptake = build_p3(n)
    if method == "BDF":
        kw = dict(method="BDF", jac=js)
    else:
        kw = dict(method="LSODA", jac=jb, lband=1, uband=1)
    sol = solve_ivp(f, (0.0, times[-1]), np.zeros(n), t_eval=times, rtol=rtol, atol=rtol * 1e-3, **kw)
    if not sol.success:
        return None
    return uptake(sol.y)


def run(problem, method, n, rtol, ref):
    times = ref["times"]
    if problem == "P3":
        best, got = None, None
        for _ in range(3):
            t0 = time.perf_counter()
            got = solve_p3(n, method, rtol, times)
            dt = time.perf_counter() - t0
            best = dt if best is None else min(best, dt)
        if got is None:
            return None
        err = max(abs(g - w) / abs(w) for g, w in zip(got, ref["values"]))
        return {"method": method, "cells": n, "rtol": rtol, "seconds": best, "error": err}
    f, J, band, vol = build(n, problem)
    if method == "BDF":
        kw = dict(method="BDF", jac=lambda t, y: J)
    else:
        kw = dict(method="LSODA", jac=lambda t, y: band, lband=1, uband=1)
    best, sol = None, None
    for _ in range(3):
        t0 = time.perf_counter()
        sol = solve_ivp(f, (0.0, times[-1]), np.zeros(n + 1), t_eval=times, rtol=rtol, atol=rtol * 1e-3, **kw)
        dt = time.perf_counter() - t0
        best = dt if best is None else min(best, dt)
    if not sol.success:
        return None
    if problem == "P1":
        got = (vol @ sol.y[:n]) / vol.sum()
    else:
        got = sol.y[n] / ref["scale"]
    err = max(abs(g - w) / abs(w) for g, w in zip(got, ref["values"]))
    return {"method": method, "cells": n, "rtol": rtol, "seconds": best, "error": err}


def reference_p3(cells):
    times = [10.0, 100.0, 1000.0]
    vals = []
    for n in cells:
        got = solve_p3(n, "BDF", 1e-10, times)
        if got is None:
            raise SystemExit("P3 reference: solve_ivp failed with %d cells" % n)
        vals.append([float(v) for v in got])
    fine, coarse = np.array(vals[-1]), np.array(vals[-2])
    extra = fine + (fine - coarse) / 3.0
    print(json.dumps({"times": times, "cells": cells, "values": vals, "extrapolated": [float(v) for v in extra]}))


def main():
    problem = sys.argv[1]
    if problem == "P3-reference":
        cells = [800, 1600, 3200]
        if len(sys.argv) > 2:
            cells = [int(c) for c in sys.argv[2].split(",")]
        reference_p3(cells)
        return
    ref = json.loads(sys.argv[2])
    cells = [50, 100, 200, 400, 800, 1600, 2400]
    if len(sys.argv) > 3:
        cells = [int(c) for c in sys.argv[3].split(",")]
    out = []
    for method in ("BDF", "LSODA"):
        for n in cells:
            for rtol in (1e-5, 1e-7, 1e-9):
                r = run(problem, method, n, rtol, ref)
                if r:
                    out.append(r)
    print(json.dumps(out))


if __name__ == "__main__":
    main()
