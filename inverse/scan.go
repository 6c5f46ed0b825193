package inverse

import (
	"errors"
	"fmt"
	"math"
	"strings"
)

// StrengthsScan answers StrengthsRSS for many placements of one extra source beside
// sources whose geometry stays fixed: the search for a magnetised object (a point dipole
// at each node of a grid) beside conductors already located. The fixed sources and the
// background are factored once, by Householder QR, as [Phi_F] = Q_F R_F; for each
// trial the extra source's columns E are projected on the orthogonal complement of
// Phi_F and factored alone,
//
//	Q_F^T E = [E_1; E_2],  E_2 = Q_E R_E,  RSS = ||(Q_F^T y)_2||^2 - ||Q_E^T (Q_F^T y)_2||^2_k,
//
// the last term over the first k = NumStrengths() rows: the block form of the QR of
// [Phi_F, E] (Golub & Van Loan, Matrix Computations, 4th ed., section 5.2), so the
// result is that of StrengthsRSS with sources = append(fixed, extra) up to rounding,
// at the cost of the extra columns alone. A StrengthsScan is not safe for concurrent
// use; create one per goroutine.
type StrengthsScan struct {
	p      *Problem
	m, nr  int
	nf     int       // fixed columns: the fixed sources' strengths, then the background
	a, tau []float64 // the fixed basis, factored (column-major m x nf)
	qty    []float64 // Q_F^T y, column-major m x nr
	rmax   float64   // largest |R_F| diagonal, for the rank test
	e, et  []float64 // work: the extra columns and their factored tails
}

// NewStrengthsScan factors the fixed sources (possibly none) and the background chosen
// by set.Background for the readings of p. Only set.Background is used from the
// settings, as in FitStrengths.
func NewStrengthsScan(p *Problem, fixed []Source, set *Settings) (*StrengthsScan, error) {
	if p == nil {
		return nil, errors.New("inverse: nil problem")
	}
	if err := p.validate(); err != nil {
		return nil, err
	}
	if err := set.check(); err != nil {
		return nil, err
	}
	if err := checkSources("NewStrengthsScan", "fixed", fixed); err != nil {
		return nil, err
	}
	s := set.orDefault()
	sv := newSurvey(p)
	phi, m, q, _, _, err := strengthsBasis(p, "fixed", fixed, s, sv)
	if err != nil {
		return nil, err
	}
	sc := &StrengthsScan{p: p, m: m, nr: sv.nrhs, nf: q}
	sc.a = make([]float64, m*max(q, 1))
	for row := range m {
		for c := range q {
			sc.a[c*m+row] = phi[row*q+c]
		}
	}
	sc.tau = make([]float64, max(q, 1))
	sc.qty = make([]float64, m*sc.nr)
	for row := range m {
		for k := range sc.nr {
			sc.qty[k*m+row] = sv.y[row*sc.nr+k]
		}
	}
	if q > 0 {
		houseQR(sc.a, m, q, sc.tau)
		for k := range q {
			sc.rmax = math.Max(sc.rmax, math.Abs(sc.a[k*m+k]))
		}
		for k := range q {
			if math.Abs(sc.a[k*m+k]) <= 1e-11*sc.rmax {
				return nil, inseparable("fixed", fixed, k)
			}
		}
		houseApplyQT(sc.a, m, q, sc.tau, sc.qty, sc.nr)
	}
	return sc, nil
}

// RSS returns the residual sum of squares (nT^2, summed over readings, axes and, for AC,
// real and imaginary parts) of the fit of the fixed sources, the background and extra
// together: StrengthsRSS(p, append(fixed, extra), set).
func (sc *StrengthsScan) RSS(extra Source) (float64, error) {
	if sc == nil {
		return 0, errors.New("inverse: StrengthsScan.RSS: no scan (nil); make one with NewStrengthsScan")
	}
	if err := checkSources("StrengthsScan.RSS", "", []Source{extra}); err != nil {
		return 0, err
	}
	m, nf, nr := sc.m, sc.nf, sc.nr
	k := extra.NumStrengths()
	if m <= nf+k {
		return 0, fmt.Errorf("inverse: %d readings (3 axes each) are too few for %d strengths", m/3, nf+k)
	}
	sc.e = grow(sc.e, m*k)
	if err := sourceBasis(sc.p, extra, sc.e, 1, m, 0); err != nil {
		return 0, nameOnSource(err, sourceLabel("", 0, extra))
	}
	// Project on the complement of the fixed columns and factor what is left.
	if nf > 0 {
		houseApplyQT(sc.a, m, nf, sc.tau, sc.e, k)
	}
	mt := m - nf
	sc.et = grow(sc.et, mt*k+k+mt)
	et, tau, t := sc.et[:mt*k], sc.et[mt*k:mt*k+k], sc.et[mt*k+k:]
	for c := range k {
		copy(et[c*mt:(c+1)*mt], sc.e[c*m+nf:(c+1)*m])
	}
	houseQR(et, mt, k, tau)
	rmax := sc.rmax
	for c := range k {
		rmax = math.Max(rmax, math.Abs(et[c*mt+c]))
	}
	for c := range k {
		if math.Abs(et[c*mt+c]) <= 1e-11*rmax {
			return 0, fmt.Errorf("inverse: %s cannot be separated from the fixed sources and the background with these readings", strings.Replace(strengthName("", []Source{extra}, c), "the source", "the extra source", 1))
		}
	}
	var rss float64
	for h := range nr {
		copy(t, sc.qty[h*m+nf:(h+1)*m])
		houseApplyQT(et, mt, k, tau, t, 1)
		rss += sumSq(t[k:])
	}
	return rss, nil
}
