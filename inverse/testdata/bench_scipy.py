#!/usr/bin/env python3
"""Measurement aid, not a test: times the fit of BenchmarkFitOneLineTraverse41 and
BenchmarkFitOneLineNineTraverses (inverse/bench_test.go) written with a general-purpose
scientific Python stack (numpy + scipy.optimize.least_squares), for the README's
performance table.

The Python version is given every advantage: a vectorised model with an analytic
Jacobian, one start from the same half-width seed (the Go fit ranks several and
iterates up to three), and the covariance from the Jacobian at the solution (the Go fit
also derives sigmas for every reported quantity).

Usage: /usr/bin/python3 inverse/testdata/bench_scipy.py (Debian python3-numpy, python3-scipy)
"""
import os
import time
import timeit

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")  # one core, like the Go benchmark

import numpy as np
from scipy.optimize import least_squares

MU0 = 1.25663706127e-6
K = MU0 / (2 * np.pi) * 1e9  # nT m / A


def direction(az, dip):
    return np.array([np.sin(az) * np.cos(dip), np.cos(az) * np.cos(dip), -np.sin(dip)])


def line_field(pts, p0, u, current):
    d = pts - p0
    du = d @ u
    rho = d - np.outer(du, u)
    q = np.einsum("ij,ij->i", rho, rho)
    return K * current * np.cross(u, d) / q[:, None]


def make_model(pts, free_az):
    """Parameters: s (east offset), z, [az, dip], I, bx, by, bz."""

    def unpack(p):
        if free_az:
            s, z, az, dip, cur, bx, by, bz = p
        else:
            s, z, cur, bx, by, bz = p
            az, dip = 0.0, 0.0
        return s, z, az, dip, cur, np.array([bx, by, bz])

    def resid(p, y):
        s, z, az, dip, cur, bg = unpack(p)
        u = direction(az, dip)
        p0 = np.array([s * np.cos(az), -s * np.sin(az), z])
        return (line_field(pts, p0, u, cur) + bg - y).ravel()

    def jac(p, y):
        s, z, az, dip, cur, bg = unpack(p)
        u = direction(az, dip)
        n0 = np.array([np.cos(az), -np.sin(az), 0.0])
        p0 = s * n0 + np.array([0, 0, z])
        d = pts - p0
        du = d @ u
        rho = d - np.outer(du, u)
        q = np.einsum("ij,ij->i", rho, rho)
        ux = np.cross(u, d)
        kq = (K * cur / q)[:, None]
        kq2 = 2 * kq / q[:, None]
        cols = []

        def dpoint(v):
            return -kq * np.cross(u, v) + kq2 * (rho @ v)[:, None] * ux

        def ddir(w):
            return kq * np.cross(w, d) + kq2 * (du * (d @ w))[:, None] * ux

        cols.append(dpoint(n0))  # offset (n0 held at the current azimuth, as in Go)
        cols.append(dpoint(np.array([0.0, 0.0, 1.0])))
        if free_az:
            cols.append(ddir(np.array([np.cos(az) * np.cos(dip), -np.sin(az) * np.cos(dip), 0.0])))
            cols.append(ddir(np.array([-np.sin(az) * np.sin(dip), -np.cos(az) * np.sin(dip), -np.cos(dip)])))
        cols.append(ux * (K / q)[:, None])
        for j in range(3):
            e = np.zeros_like(pts)
            e[:, j] = 1
            cols.append(e)
        return np.stack([c.ravel() for c in cols], axis=1)

    return resid, jac


def seed(pts, y, free_az):
    a = y - np.median(y, axis=0)
    ip = np.argmax(np.abs(a[:, 0]))
    same = np.abs(pts[:, 1] - pts[ip, 1]) < 1e-9  # the peak's own traverse
    half = same & (np.abs(a[:, 0]) <= np.abs(a[ip, 0]) / 2)
    h = np.min(np.abs(pts[half, 0] - pts[ip, 0])) if half.any() else 1.0
    z = pts[ip, 2] - h
    cur = 2 * np.pi * h * a[ip, 0] / (MU0 * 1e9)
    p = [pts[ip, 0], z] + ([0.0, 0.0] if free_az else []) + [cur] + list(np.median(y, axis=0))
    return np.array(p)


def fit(pts, y, free_az):
    resid, jac = make_model(pts, free_az)
    sol = least_squares(resid, seed(pts, y, free_az), jac=jac, method="lm", args=(y,), xtol=1e-10, ftol=1e-10)
    J = sol.jac
    dof = J.shape[0] - J.shape[1]
    s2 = 2 * sol.cost / dof
    _, sv, vt = np.linalg.svd(J, full_matrices=False)
    cov = s2 * (vt.T / sv**2) @ vt
    return sol.x, np.sqrt(np.diag(cov)), sol.nfev


def survey(traverses, npts, half, dy, rng, az):
    pts = []
    for k in range(traverses):
        yy = (k - (traverses - 1) / 2) * dy
        for i in range(npts):
            pts.append([-half + 2 * half * i / (npts - 1), yy, 0.0])
    pts = np.array(pts)
    u = direction(az, 0.0)
    y = line_field(pts, np.array([0.2, 0, -1.0]), u, 10.0) + np.array([17000, 1500, -44000])
    return pts, y + 5 * rng.standard_normal(y.shape)


def main():
    rng = np.random.default_rng(1)
    cases = [
        ("one line, one 41-point traverse", survey(1, 41, 2, 0.5, rng, 0.0), False),
        ("one line, 9 traverses (405 points), azimuth free", survey(9, 45, 2, 0.5, rng, np.arctan2(0.3, 1)), True),
    ]
    for name, (pts, y), free in cases:
        x, sd, nfev = fit(pts, y, free)
        n = 200
        c0 = time.process_time()
        t = timeit.timeit(lambda: fit(pts, y, free), number=n) / n
        cpu = (time.process_time() - c0) / n
        print(f"{name}: {t * 1e6:.0f} us wall, {cpu * 1e6:.0f} us CPU per fit "
              f"(current {x[-4]:.3f} +- {sd[-4]:.3f} A, {nfev} evaluations)")


if __name__ == "__main__":
    main()
