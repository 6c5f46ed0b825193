#!/usr/bin/env python3
"""Measurement aid, not a test: the three fits of inverse/bench_test.go
(BenchmarkScipyMirror) doing the SAME work as the Go fit, step for step, written with
numpy and scipy, for the README's performance section.

bench_scipy.py beside this script is the conservative comparison: one start read off
the field, MINPACK Levenberg-Marquardt on all parameters, sigmas of the raw parameters
only. This script instead follows the path inverse.FitLines takes on these three fits
(Settings as in BenchmarkScipyMirror; the branches the fits do not take are not
written, and the script stops with an error if it meets one):

- the survey: centroid, extent, single-traverse test, the anomaly (readings minus
  their per-axis median), the noise floor (fourth differences along the readings,
  median absolute deviation);
- seeding: the azimuth candidates (field direction at the peak, ridge axis, a fan of
  four), the half-width seed and its depth variants (1, 0.6 and 1.7 times), the pole
  seed (three weighted complex solves); the same starts, for two lines the second
  line's seeds from the one-line fit's residuals and the three splits of the first;
- screening: every start's sum of squares at its seed, on the same subsample (every
  4th reading of surveys over 256 readings), ranked by a stable sort; here vectorised
  over the starts (one batch of basis evaluations and small least-squares solves), the
  same evaluations;
- the pre-iteration on the subsample, then the polish on every reading, with the same
  limits (a rough one-line fit of 5 + 1 iterations seeding the two-line fit), the same
  acceptance rules (quick accept on a single traverse, two starts agreeing or one at
  the noise floor), the same collapse, bound and crossing-scan tests;
- the polish: Go's Levenberg-Marquardt (inverse/lm.go) line for line - column
  scaling, trust region, the Gauss-Newton step from the QR of the scaled Jacobian when
  it is well conditioned, the SVD and lambda search otherwise, the chi-square stopping
  rule - on Go's variable projection: the currents and the uniform background
  eliminated, Kaufman's Jacobian of the projected residual. The residual and Jacobian
  are kept in all 3n rows (P y, P J) instead of Go's 3n - k rotated rows (Q2^T y): the
  same sums of squares, gradients and steps, and cheaper in numpy (no complete Q).
  The QRs of tall thin matrices (the basis, 1 or 2 columns; the LM's scaled
  Jacobian, up to 8; the covariance's full Jacobian, up to 13) are taken from the
  Cholesky factor of their Gram matrix when it is well conditioned, as it is
  throughout these fits, which numpy does several times faster than a Householder QR
  (numpy.linalg.qr forms Q); by Householder QR otherwise.
  Go's LM rather than MINPACK's because it is both the same work, iteration for
  iteration, and the faster in Python here: 2 to 3 iterations on 2 to 8 parameters
  once the currents are projected out, against 8 to 34 MINPACK evaluations on all
  parameters in bench_scipy.py. (Go's stopping rule leaves these fits within about
  1e-8 of the exact minimum: a polish to full convergence agrees to 1e-6 too, with
  more iterations.)
- the uncertainty products of inverse.Result: the full covariance of every parameter
  (geometry, currents, background) from the QR of the full Jacobian at the solution
  with Go's conditioning test, sigma, chi-square, degrees of freedom; the reported
  quantities per line (point under the centroid, depth, offset, azimuth, dip, current)
  and their sigmas by central differences on the map from parameters to quantities
  (Go's steps, vectorised over all steps at once), the identifiability and guard
  tests of a forced count (currents significant, lines apart, not above the sensors,
  not at a bound), the go-and-return tests and the opposed pair's quantities and
  sigmas for two lines, the lag-one serial correlation of the residuals, the
  predictions, residuals and RMS.

Python is given every advantage that does not change the work done: vectorised
numpy over the readings (no Python loop over readings anywhere), over the starts in
the screening and over the difference steps of the sigmas; LAPACK for the
factorisations; one BLAS thread (the Go benchmark runs on one core, -cpu 1); the fit's full
residuals taken from the projection already at hand where Go rebuilds the basis;
LAPACK's triangular routines called directly (scipy.linalg.lapack), without the
checking wrappers that cost more than the solves on these small systems.

Not mirrored exactly: on the single traverse Go polishes the start it screened last
without evaluating it again (the screening's evaluation is still at hand); the
script, having screened all starts in one batch, evaluates it again (7 evaluations
against Go's 6, about 0.05 ms of Python's time). Go rebuilds the basis (no QR) for
the full residuals two or three times per fit; the script does not need to.

Check: every number inverse/testdata/bench_fits.txt holds for these fits (the lines'
geometry, currents and sigmas, depth, offset, azimuth and dip with their sigmas, the
background and its sigmas, the predictions and residuals summed per axis, RMS, sigma,
chi-square, degrees of freedom, iterations, starts, every covariance entry; the Go
test TestBenchFitsAsBefore keeps the Go fit within 1e-6 of that file) must agree to
1e-6 relative (plus 1e-12 absolute for numbers near zero); the script prints the
largest difference and stops if the check fails.

Work counts: per fit, the starts screened, pre-iterated and polished, the model
evaluations (basis, background projection and QR at one geometry), Jacobians, LM
iterations and trial steps, and evaluations of the map to reported quantities. With
--go-counts the same counts are read for the Go fit from a coverage profile of
BenchmarkScipyMirror (go test -covermode=count; no change to the Go code) and printed
beside them.

Timing: CPU time per fit, time.process_time() over many repetitions, after one
untimed warm-up fit, as bench_scipy.py.

Usage (Debian python3-numpy, python3-scipy):
    /usr/bin/python3 inverse/testdata/bench_scipy_same.py [--go-counts]
    cd inverse && go test -run XXX -cpu 1 -bench ScipyMirror -benchtime 2s .
"""
import math
import os
import re
import subprocess
import sys
import tempfile
import time

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")  # one core, like the Go benchmark
os.environ.setdefault("OMP_NUM_THREADS", "1")

import numpy as np
from scipy.linalg.lapack import dtrtri, dtrtrs


def solve_triangular(a, b, lower=False, check_finite=False):
    """a^-1 b for triangular a: LAPACK's dtrtrs, as scipy.linalg.solve_triangular calls
    it, without that wrapper's checks (most of its cost on these small systems)."""
    x, info = dtrtrs(a, b, lower=int(lower))
    if info != 0:
        raise np.linalg.LinAlgError("singular triangular factor")
    return x

HERE = os.path.dirname(os.path.abspath(__file__))

# Constants of inverse (source.go, varpro.go, problem.go, lm.go, survey.go,
# fitlines.go, covariance.go, crossingscan.go, report.go).
MU0 = 1.25663706127e-6  # inverse.Mu0, CODATA 2022
KC = 1e9 * MU0 / (2 * math.pi)  # nT * k2pi
SCREEN_POINTS = 128
POLISH_KEEP = 3
ROUGH_ITER = 5
CHI2TOL = 1e-4
FTOL, XTOL, GTOL = 1e-10, 1e-10, 1e-12  # Settings.orDefault
FNOISE = 1e-12
MIN_DEPTH = 0.02
SINGLE_RATIO = 0.1
POLE_ROUNDS = 3
RANK_TOL = 1e-9
SCAN_BELOW = 2500.0
WEAK_LINE = 0.02
PAIR_REL_SIGMA = 0.1
OPPOSED_MAX_ANGLE = 10.0
DIP_BOUND = 80 * math.pi / 180


class OffPath(Exception):
    """A branch of the Go fit that the three benchmark fits do not take."""


class Singular(Exception):
    pass


# Work counts of one fit.
W = {}
COUNT_KEYS = ["screened", "preiterated", "polished", "lm_runs", "evaluations", "jacobians",
              "jacobians_cov", "lm_iterations", "lm_trials", "derived_maps"]


def reset_counts():
    for k in COUNT_KEYS:
        W[k] = 0


def dir_of(az, dip):
    sa, ca, sd, cd = math.sin(az), math.cos(az), math.sin(dip), math.cos(dip)
    return np.array([sa * cd, ca * cd, -sd])


# ---------------------------------------------------------------- survey


class Data:
    """Readings with the uniform background projected out (Go's projData)."""

    def __init__(self, pts, y):
        self.pts, self.y = pts, y
        self.X, self.Y, self.Z = pts[:, 0].copy(), pts[:, 1].copy(), pts[:, 2].copy()
        self.n = len(pts)
        self.m = 3 * self.n
        self.ybar = y.mean(axis=0)
        self.yc = (y - self.ybar).ravel()


class Survey(Data):
    def __init__(self, pts, y):
        super().__init__(pts, y)
        n = self.n
        self.centroid = pts.mean(axis=0)
        self.zmin = pts[:, 2].min()
        self.zmean = self.centroid[2]
        self.anchor = np.array([self.centroid[0], self.centroid[1], 0.0])
        de, dn = pts[:, 0] - self.centroid[0], pts[:, 1] - self.centroid[1]
        self.extent = np.hypot(de, dn).max()
        cee, cen, cnn = de @ de / n, de @ dn / n, dn @ dn / n
        tr, det = cee + cnn, cee * cnn - cen * cen
        disc = math.sqrt(max(tr * tr / 4 - det, 0))
        l1, l2 = tr / 2 + disc, max(tr / 2 - disc, 0)
        ang = 0.5 * math.atan2(2 * cen, cee - cnn)
        self.t1 = (math.cos(ang), math.sin(ang))
        self.single = math.sqrt(l2) < SINGLE_RATIO * math.sqrt(l1)
        self._anom = None
        self._screen = None
        self._floor = None

    def anomaly(self):
        if self._anom is None:
            self._anom = anomaly(self.y)
        return self._anom

    def screen_step(self):
        return (self.n + SCREEN_POINTS - 1) // SCREEN_POINTS if self.n > 2 * SCREEN_POINTS else 1

    def screening(self):
        if self.n <= 2 * SCREEN_POINTS:
            return self
        if self._screen is None:
            s = self.screen_step()
            self._screen = Data(self.pts[::s], self.y[::s])
        return self._screen

    def noise_floor(self):
        if self._floor is None:
            y = self.y.ravel()
            d = y[:-12] - 4 * y[3:-9] + 6 * y[6:-6] - 4 * y[9:-3] + y[12:]
            med = np.median(d)
            self._floor = 1.4826 * np.median(np.abs(d - med)) / math.sqrt(70.0)
        return self._floor


def anomaly(y):
    return y - np.median(y, axis=0)


# ---------------------------------------------------------------- lines


class LineGeom:
    """A line's parameters and bounds (inverse.lineGeom): point anchor + s n0 at height
    z, n0 fixed at the seed's azimuth; azimuth and dip free or held."""
    __slots__ = ("s", "z", "az", "dip", "n0", "hold_az", "hold_dip", "s_lo", "s_hi", "z_lo", "z_hi", "anchor")

    def copy(self):
        g = LineGeom()
        g.s, g.z, g.az, g.dip, g.n0, g.anchor = self.s, self.z, self.az, self.dip, self.n0, self.anchor
        g.hold_az, g.hold_dip, g.s_lo, g.s_hi = self.hold_az, self.hold_dip, self.s_lo, self.s_hi
        g.z_lo, g.z_hi = self.z_lo, self.z_hi
        return g

    def nfree(self):
        return 2 + (not self.hold_az) + (not self.hold_dip)

    def point(self):
        return np.array([self.anchor[0] + self.n0[0] * self.s, self.anchor[1] + self.n0[1] * self.s, self.z])


def geom_from(sv, e, n, az, z, hold_az, hold_dip, dip):
    g = LineGeom()
    g.n0 = (math.cos(az), -math.sin(az))
    lim = 2 * sv.extent + 5
    g.z_hi = sv.zmin - MIN_DEPTH
    g.z = min(z, g.z_hi)
    g.anchor = sv.anchor
    g.s = (e - sv.anchor[0]) * g.n0[0] + (n - sv.anchor[1]) * g.n0[1]
    g.az, g.dip, g.hold_az, g.hold_dip = az, dip, hold_az, hold_dip
    g.s_lo, g.s_hi = -lim, lim
    g.z_lo = sv.zmin - 10 * (sv.extent + 5)
    return g


def pack(geom):
    x, lo, hi = [], [], []
    for g in geom:
        x += [g.s, g.z]
        lo += [g.s_lo, g.z_lo]
        hi += [g.s_hi, g.z_hi]
        if not g.hold_az:
            x.append(g.az)
            lo.append(-math.inf)
            hi.append(math.inf)
        if not g.hold_dip:
            x.append(g.dip)
            lo.append(-DIP_BOUND)
            hi.append(DIP_BOUND)
    return np.array(x), np.array(lo), np.array(hi)


def unpack(geom, x):
    """The lines at x: new LineGeom objects (the starts' own are left alone)."""
    out, k = [], 0
    for g in geom:
        h = g.copy()
        h.s, h.z = x[k], x[k + 1]
        k += 2
        if not g.hold_az:
            h.az = x[k]
            k += 1
        if not g.hold_dip:
            h.dip = x[k]
            k += 1
        out.append(h)
    return out


def line_arrays(geom):
    """Points, directions and the azimuth/dip sines and cosines of the lines."""
    K = len(geom)
    p0 = np.empty((K, 3))
    u = np.empty((K, 3))
    for i, g in enumerate(geom):
        p0[i] = (g.anchor[0] + g.n0[0] * g.s, g.anchor[1] + g.n0[1] * g.s, g.z)
        sa, ca, sd, cd = math.sin(g.az), math.cos(g.az), math.sin(g.dip), math.cos(g.dip)
        u[i] = (sa * cd, ca * cd, -sd)
    return p0, u


def basis(data, p0, u):
    """Field per ampere of each line at each reading, by components (K, n) each, and the
    pieces the derivatives need."""
    d0 = data.X - p0[:, 0:1]
    d1 = data.Y - p0[:, 1:2]
    d2 = data.Z - p0[:, 2:3]
    u0, u1, u2 = u[:, 0:1], u[:, 1:2], u[:, 2:3]
    du = d0 * u0 + d1 * u1 + d2 * u2
    r0, r1, r2 = d0 - du * u0, d1 - du * u1, d2 - du * u2
    iq = 1.0 / (r0 * r0 + r1 * r1 + r2 * r2)
    x0, x1, x2 = u1 * d2 - u2 * d1, u2 * d0 - u0 * d2, u0 * d1 - u1 * d0
    k = KC * iq
    phi = np.empty((len(p0), data.n, 3))
    phi[:, :, 0], phi[:, :, 1], phi[:, :, 2] = x0 * k, x1 * k, x2 * k
    return phi, (d0, d1, d2, du, r0, r1, r2, iq, x0, x1, x2)


def centred(a):
    """Rows of a (k, 3n) with the uniform background projected out: each axis less its
    mean over the readings (Go's project)."""
    k = a.shape[0]
    b = a.reshape(k, -1, 3)
    return (b - b.sum(axis=1)[:, None, :] * (1.0 / b.shape[1])).reshape(k, -1)


def chol_qr(A):
    """Q^T (rows) and the Cholesky factor L = R^T of A^T for the rows of A (k x m, k
    small): the R of A's QR up to signs. None when A^T A is not positive definite."""
    G = A @ A.T
    try:
        L = np.linalg.cholesky(G)
    except np.linalg.LinAlgError:
        return None, None
    Linv, info = dtrtri(L, lower=1)  # L^-1 A: faster than a triangular solve with 3n right-hand sides
    if info != 0:
        return None, None
    return Linv @ A, L


class Sep:
    """Variable projection of K lines and a uniform background on data (inverse.separable):
    evaluate factors the projected basis at a geometry and caches it by x."""

    def __init__(self, data, geom):
        self.data, self.geom0 = data, geom
        self.K = len(geom)
        self.np = sum(g.nfree() for g in geom)
        self.at = None
        g0 = geom[0]
        if any(g.hold_az != g0.hold_az or g.hold_dip != g0.hold_dip for g in geom):
            raise OffPath("lines with different held angles")
        self.hold_az, self.hold_dip, self.nd = g0.hold_az, g0.hold_dip, g0.nfree()
        self.n00 = np.array([[g.n0[0]] for g in geom])
        self.n01 = np.array([[g.n0[1]] for g in geom])
        self.az0 = np.array([[g.az] for g in geom])
        self.dip0 = np.array([[g.dip] for g in geom])
        self.anchor = g0.anchor

    def lines_at(self, x):
        """Points (K, 3) and directions (K, 3) of the lines at x, and their angles (K, 1)."""
        X = x.reshape(self.K, self.nd)
        s, z = X[:, 0:1], X[:, 1:2]
        az = self.az0 if self.hold_az else X[:, 2:3]
        dip = self.dip0 if self.hold_dip else X[:, self.nd - 1:self.nd]
        p0 = np.concatenate([self.anchor[0] + self.n00 * s, self.anchor[1] + self.n01 * s, z], axis=1)
        sa, ca, sd, cd = np.sin(az), np.cos(az), np.sin(dip), np.cos(dip)
        u = np.concatenate([sa * cd, ca * cd, -sd], axis=1)
        return p0, u, (sa, ca, sd, cd)

    def evaluate(self, x):
        if self.at is not None and np.array_equal(self.at, x):
            return
        self.at = None
        W["evaluations"] += 1
        p0, u, trig = self.lines_at(x)
        data = self.data
        phi, parts = basis(data, p0, u)
        bbar = phi.sum(axis=1) * (1.0 / data.n)  # (K, 3)
        A = (phi - bbar[:, None, :]).reshape(self.K, data.m)
        # The basis is a few well separated columns: its QR from the Cholesky factor of
        # the Gram matrix (Go: Householder), with Go's rank test on R's diagonal.
        if self.K == 1:
            nrm = math.sqrt(A[0] @ A[0])
            Qt, L = A / nrm, np.array([[nrm]])
        else:
            Qt, L = chol_qr(A)
        dg = np.abs(np.diag(L)) if L is not None else np.zeros(1)
        if L is None or (dg <= 1e-11 * max(math.sqrt(data.n), dg.max())).any():
            raise Singular("the lines' fields are linearly dependent")
        qty = Qt @ data.yc
        coef = qty / L[0, 0] if self.K == 1 else solve_triangular(L.T, qty, check_finite=False)
        self.u, self.trig, self.parts, self.phi = u, trig, parts, phi
        self.Qt, self.coef = Qt, coef
        self.bg = data.ybar - bbar.T @ coef
        self.r = data.yc - qty @ Qt
        self.rss = self.r @ self.r
        self.at = x.copy()

    def resid(self, x):
        self.evaluate(x)
        return self.r, self.rss

    def dphic(self):
        """d(Phi c)/d(free geometry parameters) as rows (np, 3n), unprojected (dPhiC):
        per line offset, height, then azimuth and dip when free."""
        d0, d1, d2, du, r0, r1, r2, iq, x0, x1, x2 = self.parts
        K, n = self.K, self.data.n
        kq = (self.coef * KC)[:, None] * iq
        kq2 = 2 * kq * iq
        nd = self.nd
        out = np.empty((K, nd, n, 3))

        def put(k, c0, c1, c2):
            out[:, k, :, 0], out[:, k, :, 1], out[:, k, :, 2] = c0, c1, c2

        u = self.u
        u0, u1, u2 = u[:, 0:1], u[:, 1:2], u[:, 2:3]
        n00, n01 = self.n00, self.n01
        # Offset: v = n0 (horizontal); u x n0 = (-u2 n01, u2 n00, u0 n01 - u1 n00).
        t = kq2 * (r0 * n00 + r1 * n01)
        put(0, t * x0 + kq * (u2 * n01), t * x1 - kq * (u2 * n00), t * x2 - kq * (u0 * n01 - u1 * n00))
        # Height: v = up; u x up = (u1, -u0, 0).
        t = kq2 * r2
        put(1, t * x0 - kq * u1, t * x1 + kq * u0, t * x2)
        sa, ca, sd, cd = self.trig
        k = 2
        if not self.hold_az:
            v0, v1 = ca * cd, -sa * cd  # du/daz, horizontal
            t = kq2 * du * (d0 * v0 + d1 * v1)
            put(k, kq * (v1 * d2) + t * x0, kq * (-(v0 * d2)) + t * x1, kq * (v0 * d1 - v1 * d0) + t * x2)
            k += 1
        if not self.hold_dip:
            v0, v1, v2 = -sa * sd, -ca * sd, -cd  # du/ddip
            t = kq2 * du * (d0 * v0 + d1 * v1 + d2 * v2)
            put(k, kq * (v1 * d2 - v2 * d1) + t * x0, kq * (v2 * d0 - v0 * d2) + t * x1,
                kq * (v0 * d1 - v1 * d0) + t * x2)
        return out.reshape(K * nd, 3 * n)

    def jac(self, x):
        """Kaufman's Jacobian of the projected residual (jacView), as rows (np, 3n) in all
        3n coordinates: -(I - Q Q^T) P dPhi c."""
        self.evaluate(x)
        W["jacobians"] += 1
        D = centred(self.dphic())
        D -= (D @ self.Qt.T) @ self.Qt
        return -D

    def m_lm(self):
        """Go's residual length: 3n rows less the factored line columns."""
        return self.data.m - self.K


# ---------------------------------------------------------------- Levenberg-Marquardt


class LMResult:
    pass


def levmar(sep, x0, lo, hi, max_iter=200):
    """inverse/lm.go levmar with Settings.lm() (ftol, xtol 1e-10, gtol 1e-12, chi2Tol 1e-4,
    factor 1), on the separable's projected residual."""
    W["lm_runs"] += 1
    m, n = sep.m_lm(), len(x0)
    x = clip(x0, lo, hi)
    r, rss = sep.resid(x)
    nfev, status, jac_fresh, it = 1, "MaxIterations", False, 0
    mn = float(max(m, n))
    delta = 0.0
    diag = None
    J = None
    for iteration in range(max_iter):
        it = iteration + 1
        W["lm_iterations"] += 1
        if rss == 0:
            status = "ConvergedExact"
            break
        if not jac_fresh:
            J = sep.jac(x)
            jac_fresh = True
        cn2 = np.einsum("ij,ij->i", J, J)
        grad = J @ r
        cn = np.sqrt(cn2)
        rn = math.sqrt(rss)
        if iteration == 0:
            diag = np.where(cn == 0, 1.0, cn)
        else:
            diag = np.maximum(diag, cn)
        free = ~(((x <= lo) & (grad > 0)) | ((x >= hi) & (grad < 0)))
        pos = free & (cn > 0)
        gmax = (np.abs(grad[pos]) / (cn[pos] * rn)).max() if pos.any() else 0.0
        if gmax <= GTOL or not free.any():
            status = "ConvergedGradient"
            break
        if iteration == 0:
            delta = math.sqrt(((diag * x) ** 2).sum())
            if delta == 0:
                delta = 1.0
        A = J[free] / diag[free][:, None]
        R, Rinv, qtr = lm_qr(A, r)
        # gaussNewton: the step by back substitution when R is well conditioned.
        gn_ok = (R * R).sum() * (Rinv * Rinv).sum() * mn * mn < 1e22
        if gn_ok:
            y_gn = Rinv @ qtr
            gn_norm = math.sqrt(y_gn @ y_gn)
        svd = None
        accepted = False
        while not accepted:
            lam = 0.0
            use_gn = gn_ok and gn_norm <= delta * 1.1
            if not use_gn:
                if svd is None:
                    U, s, Vt = np.linalg.svd(R)
                    svd = (s, U.T @ qtr, Vt, s[0] * mn * 1e-15)
                s, beta, Vt, tiny = svd
                if ynorm(s, beta, tiny, 0.0) > delta * 1.1:
                    lam = solve_lambda(s, beta, tiny, delta)
            step = np.zeros(n)
            if use_gn:
                step[free] = -y_gn
            else:
                s, beta, Vt, tiny = svd
                c = np.where(s > tiny, -s * beta / (s * s + lam), 0.0)
                step[free] = Vt.T @ c
            dpn = math.sqrt(step[free] @ step[free])
            step[free] /= diag[free]
            xt = clip(x + step, lo, hi)
            step = xt - x
            dxn = math.sqrt(((diag * step) ** 2).sum())
            jp = r + step @ J
            pred = rss - jp @ jp
            W["lm_trials"] += 1
            nfev += 1
            try:
                rt, rss_t = sep.resid(xt)
                ok = math.isfinite(rss_t)
            except Singular:
                ok, rss_t = False, 0.0
            rho = (rss - rss_t) / pred if ok and pred > 0 else -1.0
            if rho < 0.25:
                delta = 0.5 * min(delta, max(dxn, 1e-300))
            elif rho > 0.75 or lam == 0:
                delta = max(delta, 2 * dxn)
            xn = math.sqrt(((diag * x) ** 2).sum())
            act_rel = (rss - rss_t) / rss if ok else math.inf
            pred_rel = pred / rss
            fconv = abs(act_rel) <= max(FTOL, FNOISE) and pred_rel <= FTOL and rho <= 2
            if CHI2TOL > 0 and ok and not fconv and m > n:
                tol = CHI2TOL * rss / (m - n)
                fconv = abs(rss - rss_t) <= tol and pred <= tol and rho <= 2
            if rho > 1e-4:
                accepted = True
                x, r, rss, jac_fresh = xt, rt, rss_t, False
                if fconv:
                    status = "ConvergedResidual"
                    break
                if dxn <= XTOL * (xn + XTOL):
                    status = "ConvergedStep"
                    break
            else:
                if fconv:
                    status = "ConvergedResidual"
                    break
                if ok and pred <= 0 or dpn == 0:
                    status = "Stalled"
                    break
                if delta <= XTOL * (xn + XTOL):
                    status = "ConvergedStep"
                    break
        if status != "MaxIterations":
            break
    res = LMResult()
    res.x, res.r, res.rss, res.status, res.iter, res.nfev = x, r, rss, status, it, nfev
    return res


def lm_qr(A, r):
    """R of the QR of A^T (A: the scaled Jacobian's rows), its inverse and the first
    components of Q^T r. From the Cholesky factor of A A^T when that is well conditioned (the
    benchmark fits: condition numbers 1 to 18), else by Householder QR as Go does."""
    G = A @ A.T
    try:
        L = np.linalg.cholesky(G)
        dg = np.diag(L)
        if dg.max() <= 1e5 * dg.min():  # a cheap bound: cond(R) >= max/min of its diagonal
            R = L.T
            qtr = solve_triangular(L, A @ r, lower=True, check_finite=False)
            Rinv = solve_triangular(R, np.eye(len(R)), check_finite=False)
            if math.sqrt((R * R).sum() * (Rinv * Rinv).sum()) < 1e5:
                return R, Rinv, qtr
    except np.linalg.LinAlgError:
        pass
    Q, R = np.linalg.qr(A.T)
    return R, solve_triangular(R, np.eye(len(R)), check_finite=False), Q.T @ r


def clip(x, lo, hi):
    return np.minimum(np.maximum(x, lo), hi)


def converged(status):
    return status in ("ConvergedResidual", "ConvergedStep", "ConvergedGradient", "ConvergedExact", "Linear")


def ynorm(s, beta, tiny, lam):
    v = np.where(s > tiny, s * beta / (s * s + lam), 0.0)
    return math.sqrt(v @ v)


def solve_lambda(s, beta, tiny, delta):
    hi = math.sqrt(((s * beta) ** 2).sum()) / delta
    lo, lam = 0.0, hi * 1e-3
    keep = s > tiny
    s, beta = s[keep], beta[keep]
    for _ in range(60):
        den = s * s + lam
        v = s * beta / den
        sq = v @ v
        ds = (-2 * v * v / den).sum()
        yn = math.sqrt(sq)
        phi = yn - delta
        if abs(phi) <= 0.01 * delta:
            return lam
        if phi > 0:
            lo = lam
        else:
            hi = lam
        dyn = ds / (2 * yn)
        nxt = lam - (yn / delta) * phi / dyn
        if not (lo < nxt < hi):
            nxt = 0.5 * (lo + hi)
            if lo == 0:
                nxt = math.sqrt(max(lo, 1e-300 * hi) * hi)
                if nxt <= lo or nxt >= hi:
                    nxt = 0.5 * hi
        lam = nxt
    return lam


# ---------------------------------------------------------------- seeding


def azimuth_candidates(sv, a):
    s2 = np.einsum("ij,ij->i", a, a)
    ip = int(np.argmax(s2))
    out = []
    if math.hypot(a[ip, 0], a[ip, 1]) > 0:
        out.append(math.atan2(a[ip, 1], -a[ip, 0]))
    amax = math.sqrt(s2[ip])
    mag = np.sqrt(s2)
    w = np.where(mag >= amax / 2, mag, 0.0)
    ws = w.sum()
    ce, cn = (w @ sv.pts[:, 0]) / ws, (w @ sv.pts[:, 1]) / ws
    de, dn = sv.pts[:, 0] - ce, sv.pts[:, 1] - cn
    see, sen, snn = w @ (de * de), w @ (de * dn), w @ (dn * dn)
    if see + snn > 0:
        out.append(math.pi / 2 - 0.5 * math.atan2(2 * sen, see - snn))
    out += [k * math.pi / 4 for k in range(4)]
    uniq = []
    for az in out:
        dup = False
        for b in uniq:
            dd = math.fmod(abs(az - b), math.pi)
            if dd < 0.17 or math.pi - dd < 0.17:
                dup = True
                break
        if not dup:
            uniq.append(az)
    return uniq


def seed_for(sv, a, az):
    """The half-width seed (survey.seedFor): (e, n, az, z)."""
    nh0, nh1 = math.cos(az), -math.sin(az)
    across = np.abs(a[:, 0] * nh0 + a[:, 1] * nh1)
    ip = int(np.argmax(across))
    bp = across[ip]
    p = sv.pts[ip]
    dist = sv.pts[:, 0] * nh0 + sv.pts[:, 1] * nh1 - (p[0] * nh0 + p[1] * nh1)
    below = across <= bp / 2
    pos, neg = dist[below & (dist >= 0)], dist[below & (dist < 0)]
    hw0 = pos.min() if len(pos) else math.inf
    hw1 = -neg.max() if len(neg) else math.inf
    if math.isfinite(hw0) and math.isfinite(hw1):
        h = 0.5 * (hw0 + hw1)
    elif math.isfinite(hw0):
        h = hw0
    elif math.isfinite(hw1):
        h = hw1
    else:
        h = max(sv.extent, 0.5)
    return (p[0], p[1], az, p[2] - h)


def pole_seed(sv, a, az):
    """The pole seed (survey.poleSeed): three weighted complex least-squares solves."""
    nh0, nh1 = math.cos(az), -math.sin(az)
    d0, z0 = sv.centroid[0] * nh0 + sv.centroid[1] * nh1, sv.zmean
    h = a[:, 0] * nh0 + a[:, 1] * nh1
    g2 = (h * h + a[:, 2] * a[:, 2]).max()
    if not (g2 > 0) or math.isinf(g2):
        return None
    gs = 1 / math.sqrt(g2)
    st = sv.screen_step()
    pts, aa = sv.pts[::st], a[::st]
    w = (pts[:, 0] * nh0 + pts[:, 1] * nh1 - d0) + 1j * (pts[:, 2] - z0)
    G = (aa[:, 0] * nh0 + aa[:, 1] * nh1) * gs - 1j * aa[:, 2] * gs
    gg, ww = (G * G.conj()).real, (w * w.conj()).real
    Gc, Gw = G.conj(), G * w
    q = 0j
    for rnd in range(POLE_ROUNDS):
        wt = np.ones(len(w)) if rnd == 0 else 1 / np.abs(w - q) ** 2
        sgw, sg, sw = wt @ (Gc * w), wt @ Gc, wt @ w
        M = np.array([[wt @ gg, sgw, sg], [sgw.conjugate(), wt @ ww, sw.conjugate()],
                      [sg.conjugate(), sw, wt.sum()]])
        v = np.array([wt @ (gg * w), wt @ (ww * G), wt @ Gw])
        try:
            xs = np.linalg.solve(M, v)
        except np.linalg.LinAlgError:
            return None
        if not np.isfinite(xs[0]):
            return None
        q = xs[0]
        if q.imag + z0 >= sv.zmin:
            q = complex(q.real, 2 * (sv.zmin - z0) - q.imag)
    return (sv.centroid[0] + nh0 * q.real, sv.centroid[1] + nh1 * q.real, az, q.imag + z0)


def seeds_from(f, a, own):
    hold_az, _, az, _ = f.holds()
    azs = [az] if hold_az else azimuth_candidates(f.sv, a)
    out = []
    for i, az in enumerate(azs):
        e, n, az, z = seed_for(f.sv, a, az)
        depth = f.sv.zmean - z
        for mult in ((1, 0.6, 1.7) if i < 2 else (1,)):
            out.append((e, n, az, f.sv.zmean - mult * depth))
    if own:
        sd = pole_seed(f.sv, a, azs[0])
        if sd is not None:
            out.append(sd)
    return out


# ---------------------------------------------------------------- the fit


class Candidate:
    def __init__(self, sep, res):
        self.sep, self.x, self.res, self.rss, self.iters = sep, res.x, res, res.rss, res.iter
        self.memo = None


def collapsed(sep, x):
    geom = unpack(sep.geom0, x)
    for i in range(len(geom)):
        for j in range(i + 1, len(geom)):
            a, b = geom[i], geom[j]
            h = max(a.z_hi - max(a.z, b.z), 0.01)
            daz = abs(math.remainder(a.az - b.az, math.pi))
            pa, pb = a.point(), b.point()
            d = abs((pb[0] - pa[0]) * math.cos(a.az) - (pb[1] - pa[1]) * math.sin(a.az))
            if d < 0.01 * h and abs(a.z - b.z) < 0.01 * h and daz < 0.01:
                return True
    return False


class Fitter:
    def __init__(self, sv, count, azimuth=None, dip=None):
        self.sv, self.count, self.azimuth, self.dip = sv, count, azimuth, dip
        self.starts = 0
        self.rough = False

    def holds(self):
        hold_az = hold_dip = False
        az = dip = 0.0
        if self.dip is not None:
            hold_dip, dip = True, self.dip * math.pi / 180
        elif self.sv.single:
            hold_dip = True
        if self.azimuth is not None:
            hold_az, az = True, self.azimuth * math.pi / 180
        elif self.sv.single:
            hold_az = True
            az = math.atan2(self.sv.t1[0], self.sv.t1[1]) + math.pi / 2
        return hold_az, hold_dip, az, dip

    def at_noise(self, sep, rss):
        floor = self.sv.noise_floor()
        if not (floor > 0):
            raise OffPath("no noise floor")
        n, k = sep.data.m, sep.np + sep.K + 3
        return n > k and math.sqrt(rss / (n - k)) <= 1.2 * floor

    def run(self):
        prev, chain = None, []
        for k in range(1, self.count + 1):
            self.rough = k < self.count
            prev = self.fit_k(k, prev)
            chain.append(prev)
        self.rough = False
        c = self.forced_count(prev)
        return self.report(c)

    def fit_k(self, k, prev):
        hold_az, hold_dip, _, dip = self.holds()
        sv = self.sv
        starts = []
        if k == 1:
            for e, n, az, z in seeds_from(self, sv.anomaly(), True):
                starts.append([geom_from(sv, e, n, az, z, hold_az, hold_dip, dip)])
        else:
            base = unpack(prev.sep.geom0, prev.x)
            res = full_residuals(prev)
            for e, n, az, z in seeds_from(self, anomaly(res), False):
                starts.append(base + [geom_from(sv, e, n, az, z, hold_az, hold_dip, dip)])
                if len(base) >= 2:
                    raise OffPath("seeds beside two or more lines")
            for i in range(len(base)):
                h = sv.zmean - base[i].z
                for dd in (0.1 * h, 0.3 * h, 0.7 * h):
                    a, b = base[i].copy(), base[i].copy()
                    a.s -= dd
                    b.s += dd
                    g = list(base)
                    g[i] = a
                    starts.append(g + [b])
        best = self.best_of(starts, k == 1 and sv.single)
        if k == 1:
            self.scanned(best)
        if k == 2 and prev is not None and (not self.at_noise(best.sep, best.rss) or collapsed(best.sep, best.x)):
            raise OffPath("two lines short of the noise or collapsed")
        if k > 2:
            raise OffPath("three or more lines")
        return self.finish(k, best)

    def finish(self, k, best):
        if not self.rough:
            # release: nothing to free (areal survey, or angles held by Settings).
            if self.sv.single and (self.azimuth is None or self.dip is None):
                raise OffPath("single-traverse release of the angles")
            if k == 2:
                best = self.repolish_pair(best)
        return best

    def best_of(self, starts, quick):
        sub = self.sv.screening()
        # Screening, vectorised over the starts with the same number of lines.
        packed = [pack(g) for g in starts]
        x0s = [clip(x, lo, hi) for x, lo, hi in packed]
        rss = np.empty(len(starts))
        byk = {}
        for i, g in enumerate(starts):
            byk.setdefault(len(g), []).append(i)
        for K, idx in byk.items():
            rss[idx] = screen_rss(sub, [unpack(starts[i], x0s[i]) for i in idx])
        W["screened"] += len(starts)
        order = sorted(range(len(starts)), key=lambda i: rss[i])  # stable, as SortStableFunc
        keep, max_iter = POLISH_KEEP, 200
        if self.rough:
            keep, max_iter = 1, ROUGH_ITER
        best, best_collapsed = None, False
        for rank, i in enumerate(order):
            if rank >= keep and not best_collapsed:
                break
            x0, lo, hi = x0s[i], packed[i][1], packed[i][2]
            full_iter = max_iter
            if sub is not self.sv:
                x = self.pre_iterate(sub, starts[i], x0, lo, hi, max_iter)
                if x is not None:
                    x0 = x
                    if self.rough:
                        full_iter = 1
            sep = Sep(self.sv, starts[i])
            self.starts += 1
            W["polished"] += 1
            res = levmar(sep, x0, lo, hi, full_iter)
            agree = best is not None and abs(res.rss - best.rss) <= 1e-8 * best.rss
            clear = converged(res.status) and not ((res.x <= lo) | (res.x >= hi)).any()
            if quick and clear:
                agree = True
            if not agree and clear and self.at_noise(sep, res.rss):
                agree = True
            if best is None or res.rss < best.rss:
                best = Candidate(sep, res)
                best_collapsed = len(starts[i]) == 2 and collapsed(sep, res.x)
            if agree and not best_collapsed:
                break
        return best

    def pre_iterate(self, sub, geom, x0, lo, hi, max_iter):
        if len(geom) > 1 and len(geom) != self.count:
            return None
        W["preiterated"] += 1
        try:
            res = levmar(Sep(sub, geom), x0, lo, hi, max_iter)
        except Singular:
            return None
        if not converged(res.status) and res.status != "MaxIterations":
            return None
        return res.x

    def scanned(self, best):
        if best.sep.K != 1:
            return
        g = unpack(best.sep.geom0, best.x)[0]
        unit = self.sv.noise_floor() ** 2
        lost = g.z >= g.z_hi - 1e-9 or g.s <= g.s_lo + 1e-9 or g.s >= g.s_hi - 1e-9 or self.above_sensors(g)
        s0 = self.sv.yc @ self.sv.yc  # backgroundRSS, uniform background
        if not (unit > 0) or (s0 - best.rss) / unit > SCAN_BELOW and not lost:
            return
        raise OffPath("crossing scan of a weak or lost line")

    def above_sensors(self, g):
        p, u = g.point(), dir_of(g.az, g.dip)
        pt = p + u * ((self.sv.centroid - p) @ u)
        return pt[2] > g.z_hi + 1e-9

    def repolish_pair(self, c):
        sep = c.sep
        sep.evaluate(c.x)
        g0, g1 = unpack(sep.geom0, c.x)
        c0, c1 = sep.coef[0], sep.coef[1]
        if dir_of(g0.az, g0.dip) @ dir_of(g1.az, g1.dip) < 0:
            c1 = -c1
        same_way = c0 * c1 > 0 and abs(math.remainder(g0.az - g1.az, math.pi)) <= 10 * math.pi / 180
        if same_way:
            raise OffPath("same-way pair refit")
        if abs(c0 + c1) >= 0.5 * max(abs(c0), abs(c1)):
            return c
        su = self.summarise(c)
        if not su["pairs"] and not collapsed(c.sep, c.x):
            return c
        raise OffPath("pair refit")

    def forced_count(self, c):
        if c.sep.K < 2:
            return c
        why = self.guard(c)
        if why == "" and not collapsed(c.sep, c.x) and self.at_noise(c.sep, c.rss):
            return c
        raise OffPath("forced count not supported (" + why + ")")

    def guard(self, c):
        su = self.summarise(c)
        if su["pairs"]:
            raise OffPath("unresolved pair in the guard")
        if self.sv.single:
            raise OffPath("single-traverse angles in the guard")
        geom = unpack(c.sep.geom0, c.x)
        for i, g in enumerate(geom):  # misplaced
            if g.z >= g.z_hi - 1e-9:
                return "line %d at the depth bound" % (i + 1)
            if self.sv.zmin - g.z > 3.0 * (self.sv.extent + 1):
                return "line %d too deep" % (i + 1)
            if g.s <= g.s_lo + 1e-9 or g.s >= g.s_hi - 1e-9:
                return "line %d at the edge" % (i + 1)
        for i, e in enumerate(su["lines"]):
            if not (abs(e["current"]) > 3 * e["currentSigma"]):
                return "line %d current within 3 sigma" % (i + 1)
        for i, g in enumerate(geom):
            if self.above_sensors(g):
                return "line %d above the sensors" % (i + 1)
        for i in range(len(geom)):
            for j in range(i + 1, len(geom)):
                a, b = su["lines"][i], su["lines"][j]
                d = np.linalg.norm(a["pt"] - b["pt"])
                sa, sb = math.hypot(a["depthSigmaNear"], a["offsetSigma"]), math.hypot(b["depthSigmaNear"], b["offsetSigma"])
                if d < max(0.01, 3 * math.hypot(sa, sb)):
                    return "lines %d and %d coincide" % (i + 1, j + 1)
        return ""

    # ------------------------------------------------------------ uncertainties

    def summarise(self, c):
        if c.memo is not None and np.array_equal(c.memo[0], c.x):
            c.sep.evaluate(c.x)
            return c.memo[1]
        sep = c.sep
        sep.evaluate(c.x)
        # reorder: lines by decreasing current.
        mags = [abs(v) for v in sep.coef]
        if sorted(range(sep.K), key=lambda l: -mags[l]) != list(range(sep.K)):
            raise OffPath("lines reordered")
        su = summarise_as_is(self, sep, c)
        c.memo = (c.x.copy(), su)
        return su

    def report(self, c):
        sep = c.sep
        res = full_residuals(c)
        n = self.sv.n
        dof = 3 * n - (sep.np + sep.K + 3)
        rv = res.ravel()
        den = rv @ rv
        rho = (rv[3:] @ rv[:-3]) / den
        pairs = len(rv) - 3
        if not (pairs < 8 or dof <= 0 or not (rho > 2 / math.sqrt(pairs))):
            raise OffPath("serial-correlation widening")
        su = self.summarise(c)
        out = {"sources": su["lines"], "sigma": su["sigma"], "chi2": su["chi2"], "dof": su["dof"],
               "iterations": c.iters, "starts": self.starts, "cov": su["cov"], "status": c.res.status,
               "serialCorrelation": rho}
        out["opposed"] = opposed_of(self, c, su)
        nb = sep.np + sep.K
        out["background"] = su["v"][nb:nb + 3]
        out["backgroundSigma"] = np.sqrt(np.diag(su["cov"])[nb:nb + 3])
        out["residuals"] = res
        out["predicted"] = self.sv.y - res
        out["rms"] = math.sqrt(rv @ rv / (3 * n))
        return out


def screen_rss(data, geoms):
    """Sum of squares of the projected residual of each start (same number of lines K)
    at its seed, vectorised over the starts: S bases and S small least-squares solves
    in one batch."""
    W["evaluations"] += len(geoms)
    S, K = len(geoms), len(geoms[0])
    p0 = np.empty((S * K, 3))
    u = np.empty((S * K, 3))
    for i, g in enumerate(geoms):
        p0[i * K:(i + 1) * K], u[i * K:(i + 1) * K] = line_arrays(g)
    A = centred(basis(data, p0, u)[0].reshape(S * K, data.m)).reshape(S, K, data.m)
    G = np.matmul(A, A.transpose(0, 2, 1))
    b = A @ data.yc
    c = np.linalg.solve(G, b[:, :, None])[:, :, 0]
    r = data.yc - np.matmul(c[:, None, :], A)[:, 0, :]
    return np.einsum("sm,sm->s", r, r)


def full_residuals(c):
    """The readings less the fitted field and background (n, 3): Go rebuilds the basis
    for it (fullResiduals); it is the projected residual already at hand."""
    c.sep.evaluate(c.x)
    return c.sep.r.reshape(-1, 3)


def full_jacobian(sep):
    """Jacobian of the model (field plus background) in every parameter, as rows in the
    order of Result.Covariance: geometry, currents, background."""
    W["jacobians_cov"] += 1
    B = np.zeros((3, sep.data.n, 3))
    for a in range(3):
        B[a, :, a] = 1.0
    return np.concatenate([sep.dphic(), sep.phi.reshape(sep.K, sep.data.m), B.reshape(3, sep.data.m)])


def covariance(J):
    """(J J^T)^-1 for the rows J, from R of the column-scaled Jacobian with Go's test
    (covarianceRaw: ||R||_F^2 ||R^-1||_F^2 < 1e-2 / rankTol^2, else its SVD and rank
    test, not on the benchmark path). R from the Cholesky factor of the scaled Gram
    matrix when that is well conditioned, else by Householder QR as Go."""
    d = np.sqrt(np.einsum("ij,ij->i", J, J))
    Js = J / d[:, None]
    R = None
    try:
        L = np.linalg.cholesky(Js @ Js.T)
        Rinv = solve_triangular(L.T, np.eye(len(L)), check_finite=False)
        if (L * L).sum() * (Rinv * Rinv).sum() < 1e10:
            R = L.T
    except np.linalg.LinAlgError:
        pass
    if R is None:
        R = np.linalg.qr(Js.T, mode="r")
        Rinv = solve_triangular(R, np.eye(R.shape[0]), check_finite=False)
    if not ((R * R).sum() * (Rinv * Rinv).sum() < 1e-2 / RANK_TOL ** 2):
        raise OffPath("ill-conditioned covariance (SVD and rank test)")
    return (Rinv @ Rinv.T) / np.outer(d, d)


def derive(f, sep, V, flip, zref):
    """The reported quantities of every line for each parameter vector (rows of V),
    vectorised over the rows (deriveQuantities)."""
    W["derived_maps"] += V.shape[0]
    out, k = [], 0
    c0 = sep.np
    cen = f.sv.centroid
    for l, g in enumerate(sep.geom0):
        s, z = V[:, k], V[:, k + 1]
        k += 2
        az = np.full(len(V), g.az) if g.hold_az else V[:, k]
        k += (not g.hold_az)
        dip = np.full(len(V), g.dip) if g.hold_dip else V[:, k]
        k += (not g.hold_dip)
        cur = V[:, c0 + l]
        P = np.stack([g.anchor[0] + g.n0[0] * s, g.anchor[1] + g.n0[1] * s, z], axis=1)
        sa, ca, sd, cd = np.sin(az), np.cos(az), np.sin(dip), np.cos(dip)
        u = np.stack([sa * cd, ca * cd, -sd], axis=1)
        if flip[l]:
            u, az, dip, cur = -u, az + math.pi, -dip, -cur
        dc = cen - P
        pt = P + u * np.einsum("ij,ij->i", dc, u)[:, None]
        h2 = u[:, 0] ** 2 + u[:, 1] ** 2
        if (h2 < 0.25).any():
            raise OffPath("steep line")
        under = P + u * ((dc[:, 0] * u[:, 0] + dc[:, 1] * u[:, 1]) / h2)[:, None]
        offset = (pt[:, 0] - cen[0]) * np.cos(az) - (pt[:, 1] - cen[1]) * np.sin(az)
        azd = np.fmod(az * 180 / math.pi, 360)
        azd = np.where(azd < 0, azd + 360, azd)
        out.append({"pt": pt, "depth": zref - pt[:, 2], "under": under, "underDepth": zref - under[:, 2],
                    "offset": offset, "azimuth": np.fmod(azd, 180), "dip": dip * 180 / math.pi + 0.0,
                    "current": cur + 0.0})
    return out


def steps(su, sep):
    """The central-difference steps of summarise: one per parameter the line quantities
    read (geometry and line currents), 1e-4 of its sigma."""
    v, cov = su["v"], su["cov"]
    js = [j for j in range(len(v)) if j < sep.np or (j - sep.np) < sep.K]
    hs = []
    for j in js:
        h = 1e-4 * math.sqrt(max(cov[j, j], 0))
        if h == 0:
            h = 1e-7 * (abs(v[j]) + 1)
        hs.append(h)
    return js, np.array(hs)


def summarise_as_is(f, sep, c):
    J = full_jacobian(sep)
    cov0 = covariance(J)
    n, k = sep.data.m, sep.np + sep.K + 3
    dof = n - k
    if dof <= 0:
        raise OffPath("no degrees of freedom")
    sigma = math.sqrt(c.rss / dof)
    chi2 = c.rss / (sigma * sigma)
    cov = cov0 * (sigma * sigma)
    v = np.concatenate([c.x, sep.coef, sep.bg])
    su = {"cov": cov, "sigma": sigma, "chi2": chi2, "dof": dof, "v": v, "pairs": []}
    flip = []  # orientation: azimuth of the direction in [0, 180); flipping reverses current and dip
    geom = unpack(sep.geom0, c.x)
    for g in geom:
        a = math.fmod(g.az, 2 * math.pi)
        flip.append((a + 2 * math.pi if a < 0 else a) >= math.pi)
    su["flip"] = flip
    zref = f.sv.zmean
    su["zref"] = zref
    js, hs = steps(su, sep)
    nj = len(js)
    V = np.tile(v, (1 + 2 * nj, 1))
    V[1 + np.arange(nj), js] += hs
    V[1 + nj + np.arange(nj), js] -= hs
    q = derive(f, sep, V, flip, zref)
    lines = []
    for l, g in enumerate(geom):
        ql = q[l]

        def sigma_of(name, period=0.0):
            a = ql[name]
            dd = a[1:1 + nj] - a[1 + nj:]
            if period:
                dd = dd - period * np.round(dd / period)  # math.Remainder
            grad = np.zeros(len(v))
            grad[js] = dd / (2 * hs)
            return math.sqrt(max(grad @ cov @ grad, 0.0))

        e = {"pt": ql["pt"][0], "current": ql["current"][0], "currentSigma": sigma_of("current"),
             "depthSigmaNear": sigma_of("depth"), "offset": ql["offset"][0], "offsetSigma": sigma_of("offset"),
             "azimuth": ql["azimuth"][0], "dip": ql["dip"][0],
             "point": ql["under"][0], "depth": ql["underDepth"][0]}
        e["depthSigma"] = sigma_of("underDepth") if e["depthSigmaNear"] > 0 else e["depthSigmaNear"]
        e["azimuthSigma"] = 0.0 if g.hold_az else sigma_of("azimuth", 180.0)
        e["dipSigma"] = 0.0 if g.hold_dip else sigma_of("dip")
        e["dir"] = dir_of(e["azimuth"] * math.pi / 180, e["dip"] * math.pi / 180)
        if not (abs(e["current"]) > 2 * e["currentSigma"]):
            e["note"] = "current not significant"
        g0 = unpack(sep.geom0, c.x)[l]
        if g0.z >= g0.z_hi - 1e-9 or g0.s <= g0.s_lo + 1e-9 or g0.s >= g0.s_hi - 1e-9 or f.above_sensors(g0):
            raise OffPath("line at a bound or above the sensors")
        lines.append(e)
    su["lines"] = lines
    su["q"], su["js"], su["hs"] = q, js, hs
    # Go-and-return pairs among the lines (pairOf): two resolved lines are none.
    for i in range(len(lines)):
        for j in range(i + 1, len(lines)):
            a, b = lines[i], lines[j]

            def sig(e):
                return abs(e["current"]) > 3 * e["currentSigma"] and e["currentSigma"] < PAIR_REL_SIGMA * abs(e["current"])
            dist = np.linalg.norm(a["pt"] - b["pt"])
            sa, sb = math.hypot(a["depthSigmaNear"], a["offsetSigma"]), math.hypot(b["depthSigmaNear"], b["offsetSigma"])
            coincide = dist < max(0.01, 3 * math.hypot(sa, sb))
            if not (sig(a) and sig(b) and not coincide):
                raise OffPath("unresolved pair")
    for i in range(1, len(lines)):
        if abs(lines[i]["current"]) / abs(lines[0]["current"]) < WEAK_LINE:
            lines[i]["note"] = "weak line"
    return su


def opposed_of(f, c, su):
    """Lines beside the strongest within opposedMaxAngle carrying current the other way,
    with the pair's quantities and sigmas (opposedOf, pairQuantities)."""
    lines = su["lines"]
    if len(lines) < 2:
        return []
    out = []
    for j in range(1, len(lines)):
        if not abs(math.remainder(lines[0]["azimuth"] - lines[j]["azimuth"], 180)) <= OPPOSED_MAX_ANGLE:
            continue
        base, sg = pair_quantities(f, c.sep, su, 0, j)
        if not (0 <= base["azimuth"] < 180):
            raise OffPath("pair azimuth folded")
        if abs(base["net"]) < 2 * base["currentI"]:
            out.append({"lines": (0, j), "base": base, "sigma": sg})
    out.sort(key=lambda p: p["base"]["spacing"])
    return out


def pair_quantities(f, sep, su, i, j):
    js, hs, nj = su["js"], su["hs"], len(su["js"])
    v, cov, flip = su["v"], su["cov"], su["flip"]
    V = np.tile(v, (1 + 2 * nj, 1))
    V[1 + np.arange(nj), js] += hs
    V[1 + nj + np.arange(nj), js] -= hs
    q = derive(f, sep, V, flip, su["zref"])  # derivePair maps the line quantities again
    a, b = q[i], q[j]
    ci, cj = V[:, sep.np + i] * (-1 if flip[i] else 1), V[:, sep.np + j] * (-1 if flip[j] else 1)
    daz = b["azimuth"] - a["azimuth"]
    dAz = daz - 180 * np.round(daz / 180)
    turn = np.abs(daz) > 90
    cj = np.where(turn, -cj, cj)
    dipj = np.where(turn, -b["dip"], b["dip"])
    az = a["azimuth"] + dAz / 2
    pc = 0.5 * (a["pt"] + b["pt"])
    azr = az * math.pi / 180
    cen = f.sv.centroid
    s = (ci - cj) / 2
    dist = np.linalg.norm(a["pt"] - b["pt"], axis=1)
    qs = {"pointE": pc[:, 0], "pointN": pc[:, 1], "pointU": pc[:, 2], "depth": su["zref"] - pc[:, 2],
          "offset": (pc[:, 0] - cen[0]) * np.cos(azr) - (pc[:, 1] - cen[1]) * np.sin(azr),
          "azimuth": az, "dip": (a["dip"] + dipj) / 2, "moment": np.abs(s) * dist, "net": ci + cj,
          "netPhase": np.zeros(len(V)), "currentI": np.abs(s), "spacing": dist}
    base, sg = {}, {}
    for name, arr in qs.items():
        base[name] = arr[0]
        dd = arr[1:1 + nj] - arr[1 + nj:]
        if name == "azimuth":
            dd = dd - 180 * np.round(dd / 180)
        elif name == "netPhase":
            dd = dd - 360 * np.round(dd / 360)
        grad = np.zeros(len(v))
        grad[js] = dd / (2 * hs)
        sg[name] = math.sqrt(max(grad @ cov @ grad, 0.0))
    return base, sg


def fit(pts, y, count, azimuth=None, dip=None):
    reset_counts()
    # Problem.validate and FitLines' checks: finite readings, an extent, an anomaly.
    if len(pts) < 3 or not (np.isfinite(pts).all() and np.isfinite(y).all()):
        raise ValueError("too few readings, or readings not finite")
    sv = Survey(pts, y)
    if sv.extent == 0 or not np.abs(sv.anomaly()).max() > 0:
        raise ValueError("no extent or no anomaly")
    if sv.single and (azimuth is None or dip is None):
        raise OffPath("single traverse with free angles")
    return Fitter(sv, count, azimuth, dip).run()


# ---------------------------------------------------------------- check against Go


def go_values(res):
    """The fit's numbers named as inverse/bench_fits_test.go benchFitValues names them."""
    out = {}
    for i, e in enumerate(res["sources"]):
        p = "source%d." % i
        for j in range(3):
            out[p + "point%d" % j] = e["point"][j]
            out[p + "dir%d" % j] = e["dir"][j]
        for k in ("current", "currentSigma", "depth", "depthSigma", "offset", "offsetSigma",
                  "azimuth", "azimuthSigma", "dip", "dipSigma"):
            out[p + k] = e[k]
    for j in range(3):
        out["background%d" % j] = res["background"][j]
        out["backgroundSigma%d" % j] = res["backgroundSigma"][j]
        out["predictedSum%d" % j] = res["predicted"][:, j].sum()
        out["residualSumSq%d" % j] = (res["residuals"][:, j] ** 2).sum()
    out["rms"], out["sigma"], out["chi2"], out["dof"] = res["rms"], res["sigma"], res["chi2"], res["dof"]
    out["iterations"], out["starts"] = res["iterations"], res["starts"]
    cov = res["cov"]
    K = len(res["sources"])
    names = []
    for l in range(K):
        names += ["line%d.%s" % (l + 1, s) for s in res["geomNames"][l]]
    names += ["line%d.current" % (l + 1) for l in range(K)] + ["bg.e", "bg.n", "bg.u"]
    for i in range(len(names)):
        for j in range(i, len(names)):
            out["cov.%s.%s" % (names[i], names[j])] = cov[i, j]
    return out


def read_go_fits():
    fits = {}
    with open(os.path.join(HERE, "bench_fits.txt")) as fh:
        for line in fh:
            if line.startswith("#") or not line.strip():
                continue
            f, name, val = line.split()
            fits.setdefault(f, {})[name] = float(val)
    return fits


def check(name, res, want):
    got = go_values(res)
    worst, worst_name = 0.0, ""
    missing = sorted(set(want) - set(got))
    for k, w in want.items():
        if k not in got:
            continue
        d = abs(got[k] - w)
        rel = d / max(abs(w), 1e-300)
        if d > 1e-12 and rel > worst:
            worst, worst_name = rel, k
    ok = not missing and worst <= 1e-6 and set(got) <= set(want)
    return ok, worst, worst_name, len(want), missing


# ---------------------------------------------------------------- Go's counts


GO_MARKS = [
    # count name, file, function, statement whose block counts it
    ("screened", "fitlines.go", "func (f *fitter) bestOf(", "rs = append(rs, ranked{sp, x0, sumSq(r), st})"),
    ("preiterated", "fitlines.go", "func (f *fitter) preIterate(", "res, err := levmar(lmp, x0, ls)"),
    ("polished", "fitlines.go", "func (f *fitter) bestOf(", "f.starts++"),
    ("lm_runs", "lm.go", "func levmar(", "set = set.withDefaults()"),
    ("evaluations", "varpro.go", "func (sp *separable) evaluate(", "sp.ok = false"),
    ("jacobians", "varpro.go", "func (sp *separable) jacView(", "sp.dPhiC(sp.dblk, np)"),
    ("jacobians_cov", "fullr.go", "func (sp *separable) fullR(", "sp.dPhiC(dblk, np)"),
    ("basis_rebuilds", "varpro.go", "func (sp *separable) fullResiduals(", "err := sp.fillPhi(phi, 1, m, sp.pos)"),
    ("lm_iterations", "lm.go", "func levmar(", "res.iter = iter + 1"),
    ("lm_trials", "lm.go", "func levmar(", "res.nfev++"),
    ("derived_maps", "report.go", "func deriveQuantities(", "np := sp.nparams()"),
]


def go_counts(bench):
    """Work counts of one Go fit, from a count-mode coverage profile of one run of the
    benchmark (one fit)."""
    inv = os.path.dirname(HERE)
    with tempfile.TemporaryDirectory() as tmp:
        prof = os.path.join(tmp, "cover.out")
        subprocess.run(["go", "test", "-run", "XXX", "-bench", bench + "$", "-benchtime", "1x", "-cpu", "1",
                        "-covermode=count", "-coverprofile=" + prof, "."], cwd=inv, check=True,
                       stdout=subprocess.DEVNULL)
        blocks = []
        for line in open(prof):
            mm = re.match(r".*/([^/]+\.go):(\d+)\.\d+,(\d+)\.\d+ \d+ (\d+)$", line.strip())
            if mm:
                blocks.append((mm.group(1), int(mm.group(2)), int(mm.group(3)), int(mm.group(4))))
    out = {}
    for key, fname, func, stmt in GO_MARKS:
        src = open(os.path.join(inv, fname)).read().split("\n")
        start = next(i for i, s in enumerate(src) if s.startswith(func)) + 1
        ln = next(i for i in range(start, len(src)) if src[i].strip() == stmt) + 1
        cands = [b for b in blocks if b[0] == fname and b[1] <= ln <= b[2]]
        out[key] = max(cands, key=lambda b: b[1])[3]
    return out


# ---------------------------------------------------------------- main


CASES = [
    # file, Go benchmark, lines, azimuth and dip held (degrees), repetitions
    ("bench_traverse41.csv", "BenchmarkScipyMirror/bench_traverse41", 1, (0.0, 0.0), 400),
    ("bench_nine_traverses.csv", "BenchmarkScipyMirror/bench_nine_traverses", 1, None, 100),
    ("bench_two_lines500.csv", "BenchmarkScipyMirror/bench_two_lines500", 2, None, 40),
]


def run_case(pts, y, k, held):
    res = fit(pts, y, k, *(held or (None, None)))
    names = []
    for l in range(k):
        g = ["offset", "height"]
        if held is None:
            g += ["azimuth", "dip"]
        names.append(g)
    res["geomNames"] = names
    return res


def main():
    import scipy
    want_go = "--go-counts" in sys.argv
    print(f"python {sys.version.split()[0]}, numpy {np.__version__}, scipy {scipy.__version__}")
    go_fits = read_go_fits()
    failed = False
    for name, gobench, k, held, reps in CASES:
        data = np.loadtxt(os.path.join(HERE, name), delimiter=",", comments="#", skiprows=3)
        pts, y = data[:, :3].copy(), data[:, 3:].copy()
        res = run_case(pts, y, k, held)  # warm-up, the answer and the counts
        counts = dict(W)
        ok, worst, worst_name, nvals, missing = check(name, res, go_fits[name])
        failed |= not ok
        c0 = time.process_time()
        w0 = time.perf_counter()
        for _ in range(reps):
            fit(pts, y, k, *(held or (None, None)))
        cpu = (time.process_time() - c0) / reps
        wall = (time.perf_counter() - w0) / reps
        lines = "; ".join(
            f"I = {e['current']:.3f} +- {e['currentSigma']:.3f} A, depth {e['depth']:.4f} +- {e['depthSigma']:.4f} m, "
            f"azimuth {e['azimuth']:.2f} +- {e['azimuthSigma']:.2f} deg" for e in res["sources"])
        print(f"{name} ({len(pts)} points, {gobench}): {cpu * 1e6:.0f} us CPU, {wall * 1e6:.0f} us wall per fit; {lines}")
        print(f"  against Go (bench_fits.txt): {nvals} numbers, largest relative difference {worst:.2g} ({worst_name}): "
              f"{'agree to 1e-6' if ok else 'DISAGREE'}" + (f"; missing {missing}" if missing else ""))
        print("  python work: " + ", ".join(f"{key} {counts[key]}" for key in COUNT_KEYS))
        if want_go:
            gc = go_counts(gobench)
            print("  go work:     " + ", ".join(f"{key} {gc[key]}" for key in COUNT_KEYS) +
                  f"; and {gc['basis_rebuilds']} basis rebuilds for the full residuals")
    if failed:
        sys.exit("the Python fits do not reproduce the Go fits")


if __name__ == "__main__":
    main()
