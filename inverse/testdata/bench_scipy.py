#!/usr/bin/env python3
"""Measurement aid, not a test: the fits of inverse/bench_test.go (BenchmarkScipyMirror)
written with a general-purpose scientific Python stack, numpy + scipy.optimize, for the
README's performance table.

Same data: the survey files beside this script, written by the Go benchmark code
(`go test ./inverse -run TestBenchSurveyFiles -update`) and checked against it by that
test, so both sides fit exactly the same readings.

Same model: straight infinite lines (Biot-Savart) plus a uniform background per axis.
One traverse: each line has offset and height, azimuth held perpendicular to the
traverse and dip held at zero (the Go benchmark holds them too, through
Settings.Azimuth and Settings.Dip; by default the Go fit also fits them from the
three-axis field). Areal surveys: offset, height, azimuth and dip per line. Strengths
(currents, background) are fitted with the geometry.

Python is given every advantage that does not change the answer:
- analytic Jacobian, vectorised over all readings (no finite differences);
- one start, read off the field by the half-width rule (the Go fit ranks several starts
  of its own and iterates the best);
- MINPACK's Levenberg-Marquardt (least_squares method="lm"), compiled code;
- uncertainties only for the fitted parameters, from the SVD of the Jacobian at the
  solution (the Go fit also derives sigmas for depth, offset, azimuth and dip and
  reports residuals, fit statistics and identifiability);
- one BLAS thread (the Go benchmark runs on one core, `-cpu 1`).

Timing: CPU time per fit, time.process_time() over many repetitions (the Go benchmark
reports the same as cpu-ns/op), after one untimed warm-up fit.

Usage (Debian python3-numpy, python3-scipy):
    /usr/bin/python3 inverse/testdata/bench_scipy.py
    cd inverse && go test -run XXX -cpu 1 -bench ScipyMirror -benchtime 2s .
"""
import os
import sys
import time

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")  # one core, like the Go benchmark
os.environ.setdefault("OMP_NUM_THREADS", "1")

import numpy as np
from scipy.optimize import least_squares

MU0 = 1.25663706127e-6  # CODATA 2022, as inverse.Mu0
K = MU0 / (2 * np.pi) * 1e9  # nT m / A
HERE = os.path.dirname(os.path.abspath(__file__))


def cross(a, b):
    """a x b for rows of a (n x 3) or a single vector, with b a single vector or rows;
    explicit components are several times faster than np.cross on these sizes."""
    a0, a1, a2 = a[..., 0], a[..., 1], a[..., 2]
    b0, b1, b2 = b[..., 0], b[..., 1], b[..., 2]
    return np.stack([a1 * b2 - a2 * b1, a2 * b0 - a0 * b2, a0 * b1 - a1 * b0], axis=-1)


def direction(az, dip):
    """Unit vector of azimuth az (clockwise from north) and dip (down positive)."""
    return np.array([np.sin(az) * np.cos(dip), np.cos(az) * np.cos(dip), -np.sin(dip)])


class LinesModel:
    """K straight lines and a uniform background.

    Parameters per line: s (offset along the horizontal normal n0 through the anchor,
    the centroid at height 0), z (height), then az and dip when free. Then the K
    currents and the three background components. This is the Go parametrisation
    (inverse/varpro.go lineGeom), except that Go eliminates the linear strengths by
    variable projection while here they are iterated with the geometry.
    """

    def __init__(self, pts, nlines, free_dir, az_fixed, anchor):
        self.pts, self.k, self.free = pts, nlines, free_dir
        self.az_fixed, self.anchor = az_fixed, anchor
        self.ng = 4 if free_dir else 2
        # The background columns of the Jacobian do not change: built once.
        self.bgcols = [np.zeros_like(pts) for _ in range(3)]
        for j in range(3):
            self.bgcols[j][:, j] = 1
        self.bgcols = [c.ravel() for c in self.bgcols]

    def unpack(self, p):
        geo = []
        for i in range(self.k):
            g = p[i * self.ng:(i + 1) * self.ng]
            s, z = g[0], g[1]
            az, dip = (g[2], g[3]) if self.free else (self.az_fixed, 0.0)
            geo.append((s, z, az, dip))
        cur = p[self.k * self.ng:self.k * self.ng + self.k]
        bg = p[self.k * self.ng + self.k:]
        return geo, cur, bg

    def _line(self, s, z, az, dip):
        u = direction(az, dip)
        n0 = np.array([np.cos(az), -np.sin(az), 0.0])
        p0 = self.anchor + s * n0
        p0[2] = z
        d = self.pts - p0
        du = d @ u
        rho = d - np.outer(du, u)
        q = np.einsum("ij,ij->i", rho, rho)
        ux = cross(u, d)
        return u, n0, d, du, rho, q, ux

    def resid(self, p, y):
        geo, cur, bg = self.unpack(p)
        f = np.broadcast_to(bg, self.pts.shape).copy()
        for (s, z, az, dip), c in zip(geo, cur):
            _, _, _, _, _, q, ux = self._line(s, z, az, dip)
            f += (K * c / q)[:, None] * ux
        return (f - y).ravel()

    def jac(self, p, y):
        geo, cur, bg = self.unpack(p)
        cols_geo, cols_cur = [], []
        for (s, z, az, dip), c in zip(geo, cur):
            u, n0, d, du, rho, q, ux = self._line(s, z, az, dip)
            kq = (K * c / q)[:, None]
            kq2 = 2 * kq / q[:, None]

            def dpoint(v):  # dB/dp0 . v
                return -kq * cross(u, v) + kq2 * (rho @ v)[:, None] * ux

            def ddir(w):  # dB/du . w
                return kq * cross(w, d) + kq2 * (du * (d @ w))[:, None] * ux

            cols_geo.append(dpoint(n0))  # n0 held at the current azimuth, as in Go
            cols_geo.append(dpoint(np.array([0.0, 0.0, 1.0])))
            if self.free:
                cols_geo.append(ddir(np.array([np.cos(az) * np.cos(dip), -np.sin(az) * np.cos(dip), 0.0])))
                cols_geo.append(ddir(np.array([-np.sin(az) * np.sin(dip), -np.cos(az) * np.sin(dip), -np.cos(dip)])))
            cols_cur.append(ux * (K / q)[:, None])
        cols = [c.ravel() for c in cols_geo + cols_cur] + self.bgcols
        return np.stack(cols, axis=1)


def seed(pts, y, nlines, free_dir, az0, anchor):
    """One start from the field: the line under the peak of the horizontal anomaly
    across it, depth equal to the half-width at half maximum, current from Ampere's
    law; for two lines, the pair 0.3 depth either side of it (a cable and its return)."""
    bg = np.median(y, axis=0)
    a = y - bg
    n0 = np.array([np.cos(az0), -np.sin(az0), 0.0])
    across = a @ n0
    ip = np.argmax(np.abs(across))
    along_pk = (pts - pts[ip]) @ n0
    # readings on the peak's own traverse (same north within 1 mm)
    same = np.abs(pts[:, 1] - pts[ip, 1]) < 1e-3
    half = same & (np.abs(across) <= np.abs(across[ip]) / 2)
    h = np.min(np.abs(along_pk[half])) if half.any() else 1.0
    s = (pts[ip] - anchor) @ n0
    z = pts[ip, 2] - h
    cur = 2 * np.pi * h * across[ip] / (MU0 * 1e9)
    geo = [s, z] + ([az0, 0.0] if free_dir else [])
    if nlines == 1:
        return np.array(geo + [cur] + list(bg))
    d = 0.3 * h
    g1, g2 = list(geo), list(geo)
    g1[0] -= d
    g2[0] += d
    return np.array(g1 + g2 + [cur, -cur] + list(bg))


def fit(pts, y, nlines, free_dir):
    anchor = np.array([pts[:, 0].mean(), pts[:, 1].mean(), 0.0])
    az0 = 0.0  # traverses run east: lines seeded running north
    model = LinesModel(pts, nlines, free_dir, az0, anchor)
    x0 = seed(pts, y, nlines, free_dir, az0, anchor)
    sol = least_squares(model.resid, x0, jac=model.jac, method="lm", args=(y,), xtol=1e-10, ftol=1e-10)
    J = sol.jac
    dof = J.shape[0] - J.shape[1]
    s2 = 2 * sol.cost / dof
    _, sv, vt = np.linalg.svd(J, full_matrices=False)
    cov = s2 * (vt.T / sv**2) @ vt
    geo, cur, _ = model.unpack(sol.x)
    sd = np.sqrt(np.diag(cov))
    ncur = nlines * model.ng
    return geo, cur, sd[ncur:ncur + nlines], sol.nfev, sol.success


CASES = [
    # file, Go benchmark, lines, azimuth and dip free, repetitions
    ("bench_traverse41.csv", "BenchmarkScipyMirror/bench_traverse41", 1, False, 400),
    ("bench_nine_traverses.csv", "BenchmarkScipyMirror/bench_nine_traverses", 1, True, 100),
    ("bench_two_lines500.csv", "BenchmarkScipyMirror/bench_two_lines500", 2, True, 40),
]


def main():
    import numpy, scipy
    print(f"python {sys.version.split()[0]}, numpy {numpy.__version__}, scipy {scipy.__version__}")
    for name, gobench, k, free, reps in CASES:
        data = np.loadtxt(os.path.join(HERE, name), delimiter=",", comments="#", skiprows=3)
        pts, y = data[:, :3].copy(), data[:, 3:].copy()
        geo, cur, csd, nfev, ok = fit(pts, y, k, free)  # warm-up, and the answer
        c0 = time.process_time()
        w0 = time.perf_counter()
        for _ in range(reps):
            fit(pts, y, k, free)
        cpu = (time.process_time() - c0) / reps
        wall = (time.perf_counter() - w0) / reps
        lines = "; ".join(
            f"I = {c:.3f} +- {e:.3f} A, height {g[1]:.4f} m, azimuth {np.degrees(g[2]) % 180:.2f} deg"
            for g, c, e in zip(geo, cur, csd))
        print(f"{name} ({len(pts)} points, {gobench}): {cpu * 1e6:.0f} us CPU, {wall * 1e6:.0f} us wall per fit; "
              f"{nfev} evaluations, converged {ok}; {lines}")


if __name__ == "__main__":
    main()
