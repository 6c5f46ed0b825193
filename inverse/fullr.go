package inverse

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// fullR returns the triangular factor of the full weighted Jacobian J = [d(Phi c)/dtheta,
// Phi] at x (the matrix of fullJacobian) without forming J, from the factorisation that
// the variable projection already holds. Ordering the columns as the uniform background
// B, the other basis columns L (per right-hand side), then the geometry D,
//
//	    [ R_BB  R_BL  R_BD ]     R_BB = diag(|b_a|),  R_Bx = B^T x / |b_a|
//	R = [  0    R_LL  R_LD ]     R_LL, R_LD: the Householder QR of P_B L applied to P_B D
//	    [  0     0    R_DD ]     R_DD: QR of the remaining rows of Q^T P_B D
//
// and R^T R = J^T J, so the covariance and the rank analysis of R are those of J. The
// result is n x n column-major; perm[i] is the index in the ParamNames order of R's
// column i.
func (sp *separable) fullR(x []float64) (r []float64, n int, perm []int, err error) {
	if err := sp.evaluate(x); err != nil {
		return nil, 0, nil, err
	}
	np := sp.nparams()
	m, g, q, nr := sp.m, sp.g, sp.q, sp.nrhs
	nb := q - g // implicit uniform background columns: 3 or 0
	n = nr*q + np
	r = sp.scr.zeros(n * n)
	perm = make([]int, n)
	// Basis columns, per right-hand side: background, then the factored columns.
	bc := sp.bgCol()
	for k := range nr {
		base := k * q
		for a := range nb {
			perm[base+a] = np + k*q + bc + a
		}
		for c := range q {
			if p := sp.pos[c]; p >= 0 {
				perm[base+nb+p] = np + k*q + c
			}
		}
		for a := range nb {
			s := math.Sqrt(sp.bn2[a])
			r[(base+a)*n+base+a] = s
			for j := range g {
				r[(base+nb+j)*n+base+a] = sp.bbar[j][a] * s
			}
		}
		for j := range g {
			for i := 0; i <= j; i++ {
				r[(base+nb+j)*n+base+nb+i] = sp.a[j*m+i]
			}
		}
	}
	// Geometry columns.
	for p := range np {
		perm[nr*q+p] = p
	}
	cols := np * nr
	dblk := sp.scr.grow(sp.dblk, m*cols)
	sp.dblk = dblk
	sp.dPhiC(dblk, np)
	mg := m - g
	t := sp.scr.take(nr*mg*np + np) // the remaining rows, stacked per right-hand side
	// The background's projection of every column first (projectCols takes several
	// columns in one pass), then each column's reflections.
	var barBuf [32][3]float64
	bar := barBuf[:0]
	if nb > 0 {
		if cols <= len(barBuf) {
			bar = barBuf[:cols]
		} else {
			bar = make([][3]float64, cols)
		}
		sp.projectCols(dblk, cols, bar)
	}
	for p := range np {
		for k := range nr {
			col := dblk[(p*nr+k)*m : (p*nr+k+1)*m]
			base := k * q
			if nb > 0 {
				cb := bar[p*nr+k]
				for a := range nb {
					r[(nr*q+p)*n+base+a] = cb[a] * math.Sqrt(sp.bn2[a])
				}
			}
			houseApplyQT(sp.a, m, g, sp.tau, col, 1)
			for i := range g {
				r[(nr*q+p)*n+base+nb+i] = col[i]
			}
			copy(t[p*nr*mg+k*mg:p*nr*mg+(k+1)*mg], col[g:])
		}
	}
	rows := nr * mg
	if rows < np {
		return nil, 0, nil, errSingularBasis
	}
	tau := t[rows*np:]
	houseQR(t[:rows*np], rows, np, tau)
	for p := range np {
		for i := 0; i <= p; i++ {
			r[(nr*q+p)*n+nr*q+i] = t[p*rows+i]
		}
	}
	return r, n, perm, nil
}

// covarianceFromR is covariance for a Jacobian given by its n x n triangular factor r
// (column-major, overwritten) whose column i is parameter perm[i]; the result is in the
// parameter order. Its workspace comes from scr (nil to allocate); the result does not.
func covarianceFromR(r []float64, n int, perm []int, scr *scratch) (*mat.SymDense, []bool, error) {
	c, unres, err := covarianceRaw(r, n, n, scr)
	if err != nil {
		return nil, nil, err
	}
	out := mat.NewSymDense(n, nil)
	un := make([]bool, n)
	for i := range n {
		un[perm[i]] = unres[i]
		for j := i; j < n; j++ {
			out.SetSym(perm[i], perm[j], c[i*n+j])
		}
	}
	return out, un, nil
}
