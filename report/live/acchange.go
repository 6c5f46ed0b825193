package live

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// An AC window's estimate is demodulated from the whole window: when the
// current's amplitude steps within it (a fault, a load switched) the
// window reads the amplitude's mean, a current that flowed at no moment,
// and a step split by a window edge reads as two smaller changes in
// consecutive windows, each of which can stay under the step alarm's
// threshold. windowChangeAC finds such a step on the series of the
// conductors' RMS currents solved from short blocks of whole cycles: each
// sensor's field phasors are demodulated block by block (the fundamental,
// with the harmonics and the static field fitted beside it), each
// sensor's noise taken from the scatter of its successive block phasors
// (at least the stated noise), and every block solved with the held
// geometry. At each block boundary a step is fitted to each conductor's
// block currents together with a straight line in time (a load drifting
// slowly changes the amplitude evenly and has no step), its sigma widened
// by the fit's Birge ratio when the blocks scatter more than their sigmas
// say; the window holds a change when the largest such step is over
// changeSigmas of its sigma. The split is then placed at the reading
// that best parts the sensors' waveforms into two sine fits, and the
// parts' phasors, demodulated from their readings, are solved for the
// currents before and after it. The amplitude is tested, not the phase:
// a phase drifting slowly, or a change of phase alone, is not reported.

// acChangeBlockRuns is how many readings per column of a block's fit
// the blocks hold at least (the spike filter's acSamplesPerParam).
const acChangeBlockRuns = acSamplesPerParam

// acChangeMinBlocks is the fewest blocks on either side of a block
// boundary tried as the split.
const acChangeMinBlocks = 1

// acBlock is one block's field phasor of a sensor, ENU, from n readings.
type acBlock struct {
	n float64
	e [3]complex128
}

// windowChangeAC returns the AC window's split when a conductor's RMS
// current steps within it by more than changeSigmas, or nil. It needs the
// despiked readings of at least two sensors (reduced.ac) and the window's
// frequency (reduced.freq).
func (p *processor) windowChangeAC(r *reduced) *windowSplit {
	f := r.freq
	if p.est == nil || len(r.ac) < 2 || len(r.ac) != len(r.used) || !(f > 0) {
		return nil
	}
	t00, tEnd := math.Inf(1), math.Inf(-1)
	cycles := 1
	harm := make([]int, len(r.ac))
	for k, d := range r.ac {
		n := len(d.t)
		if n < 2*minSamples {
			return nil
		}
		span := d.t[n-1] - d.t[0]
		if !(span > 0) {
			return nil
		}
		t00, tEnd = math.Min(t00, d.t[0]), math.Max(tEnd, d.t[n-1])
		harm[k] = acHarmonics(float64(n-1)/span, f)
		cycles = max(cycles, int(math.Ceil(float64(acChangeBlockRuns*acCols(harm[k]))/(float64(n-1)/span/f))))
	}
	D := float64(cycles) / f // a block's length, s
	nb := int(math.Floor((tEnd - t00) / D))
	if nb < 2*acChangeMinBlocks {
		return nil
	}
	w := 2 * math.Pi * f
	// Each sensor's block phasors (nil where a block holds too few
	// readings) and its noise.
	blocks := make([][]*acBlock, len(r.ac))
	sigmas := make([]float64, len(r.ac))
	for k, d := range r.ac {
		R := p.rot[d.i]
		H := harm[k]
		cols := acCols(H)
		blocks[k] = make([]*acBlock, nb)
		lo := 0
		var diffs []float64
		var last *acBlock
		for j := range nb {
			hi := lo + sort.SearchFloat64s(d.t[lo:], t00+float64(j+1)*D)
			m := hi - lo
			if m >= acChangeBlockRuns*cols {
				X := mat.NewDense(m, cols, nil)
				Y := mat.NewDense(m, 3, nil)
				for i := lo; i < hi; i++ {
					row := X.RawRowView(i - lo)
					wtau := w * (d.t[i] - t00)
					sn, cs := math.Sincos(wtau)
					row[0], row[1], row[2] = cs, sn, 1
					acHarmonicCols(row[3:], wtau, H)
					Y.Set(i-lo, 0, d.bx[i])
					Y.Set(i-lo, 1, d.by[i])
					Y.Set(i-lo, 2, d.bz[i])
				}
				var qr mat.QR
				qr.Factorize(X)
				var beta mat.Dense
				if err := qr.SolveTo(&beta, false, Y); err == nil {
					// The RMS phasor referred to t00 (calibrate's
					// convention, y = sqrt 2 Re(P exp(i w t))).
					var ph [3]complex128
					for a := range 3 {
						ph[a] = complex(beta.At(0, a), -beta.At(1, a)) / math.Sqrt2
					}
					b := &acBlock{n: float64(m)}
					for row := range 3 {
						for a := range 3 {
							b.e[row] += complex(R[row][a], 0) * ph[a]
						}
					}
					blocks[k][j] = b
					if last != nil {
						// Successive blocks' differences, scaled to one
						// reading's noise (a block's phasor has sigma/sqrt n
						// in each quadrature).
						sc := 1 / math.Sqrt(1/last.n+1/b.n)
						for row := range 3 {
							dz := (b.e[row] - last.e[row]) * complex(sc, 0)
							diffs = append(diffs, real(dz), imag(dz))
						}
					}
					last = b
				}
			}
			lo = hi
		}
		if len(diffs) < 6 {
			return nil
		}
		sigmas[k] = math.Max(1.4826*mad(diffs), p.asset.Noise)
		if !(sigmas[k] > 0) {
			return nil
		}
	}
	// Each block every sensor holds, solved: the conductors' RMS currents
	// and sigmas (widened by the block's Birge ratio).
	var bt []float64         // block centres, s from t00
	var cur, sig [][]float64 // per conductor, per block
	cur, sig = make([][]float64, len(p.names)), make([][]float64, len(p.names))
	for j := range nb {
		in := SolveInput{Points: r.in.Points}
		for k := range r.ac {
			b := blocks[k][j]
			if b == nil {
				in.Phasors = nil
				break
			}
			in.Phasors = append(in.Phasors, b.e)
			in.Sigmas = append(in.Sigmas, sigmas[k]/math.Sqrt(b.n))
		}
		if len(in.Phasors) != len(r.ac) {
			continue
		}
		sorted := append([]float64(nil), in.Sigmas...)
		sort.Float64s(sorted)
		in.Sigma = sorted[len(sorted)/2]
		out, err := p.est.Solve(&in)
		if err != nil || len(out.Current) != len(p.names) || len(out.CurrentSigma) != len(p.names) || nonFiniteOutput(out) != "" {
			continue
		}
		g := 1.0
		if out.DOF > 0 && out.Chi2 > float64(out.DOF) {
			g = math.Sqrt(out.Chi2 / float64(out.DOF))
		}
		bt = append(bt, (float64(j)+0.5)*D)
		for c := range p.names {
			cur[c] = append(cur[c], out.Current[c])
			sig[c] = append(sig[c], out.CurrentSigma[c]*g)
		}
	}
	if len(bt) < 2*acChangeMinBlocks+1 {
		return nil
	}
	// The largest step, in sigmas, over the boundaries between the solved
	// blocks and the conductors, each fitted with a line.
	// A step at a boundary, or within a block (left out).
	bestZ, bestQ, bestSkip := 0.0, -1, false
	for c := range p.names {
		for q := 1; q < len(bt); q++ {
			for _, skip := range []bool{false, true} {
				if z := stepOverLine(bt, cur[c], sig[c], q, skip); z > bestZ {
					bestZ, bestQ, bestSkip = z, q, skip
				}
			}
		}
	}
	if !(bestZ > changeSigmas) {
		return nil
	}
	// The boundary between blocks bestQ-1 and bestQ, or the middle of
	// block bestQ; the step lies within a block of it.
	near := t00 + (bt[bestQ-1]+bt[bestQ])/2
	if bestSkip {
		near = t00 + bt[bestQ]
	}
	at := p.acSplitTime(r, sigmas, near, D, t00)
	if math.IsNaN(at) {
		return nil
	}
	part := func(before bool) (*SolveOutput, error) {
		in := SolveInput{Points: r.in.Points}
		for k, d := range r.ac {
			n1 := sort.SearchFloat64s(d.t, at)
			lo, hi := 0, n1
			if !before {
				lo, hi = n1, len(d.t)
			}
			// The harmonics the part's readings allow, as the blocks'.
			H := harm[k]
			for H > 1 && hi-lo < acChangeBlockRuns*acCols(H) {
				H--
			}
			ph, _, g, _, err := acPhasors(d.t[lo:hi], [3][]float64{d.bx[lo:hi], d.by[lo:hi], d.bz[lo:hi]}, f, H, r.ref)
			if err != nil {
				return nil, err
			}
			R := p.rot[d.i]
			var e [3]complex128
			for row := range 3 {
				for a := range 3 {
					e[row] += complex(R[row][a], 0) * ph[a]
				}
			}
			in.Phasors = append(in.Phasors, e)
			in.Sigmas = append(in.Sigmas, g*sigmas[k]/math.Sqrt(float64(hi-lo)))
		}
		return p.solveChangePart(&in, true)
	}
	b, err := part(true)
	if err != nil {
		return nil
	}
	a, err := part(false)
	if err != nil {
		return nil
	}
	return &windowSplit{at: at, before: b, after: a, sigmas: bestZ}
}

// acHarmonics is the highest harmonic fitted beside the fundamental
// (freq, Hz) at a sensor's sample rate (Hz), as acSpikes's: up to
// acMaxHarmonic below the sampling limit nyquistFactor.
func acHarmonics(rate, freq float64) int {
	H := 1
	for H < acMaxHarmonic && float64(H+1)*freq*nyquistFactor <= rate*(1+1e-6) {
		H++
	}
	return H
}

// acCols is the number of columns of a block's fit with harmonics up to
// H: the fundamental's two, the static field and two per harmonic.
func acCols(H int) int { return 3 + 2*(H-1) }

// stepOverLine fits y (sigmas s) at times t with a constant, a straight
// line in time and a step between points q-1 and q by weighted least
// squares, leaving point q out when skip is set (the block in which the
// current stepped, its readings taken partly at each level), and returns
// the step's size over its sigma, the sigma widened by the fit's Birge
// ratio when that is above one; 0 when the fit fails or leaves no point
// on a side.
func stepOverLine(t, y, s []float64, q int, skip bool) float64 {
	var X [][3]float64
	var Y []float64
	var tm float64
	for _, v := range t {
		tm += v
	}
	tm /= float64(len(t))
	var before, after int
	for i := range t {
		if skip && i == q {
			continue
		}
		if !(s[i] > 0) {
			return 0
		}
		step := 0.0
		if i >= q {
			step = 1
			after++
		} else {
			before++
		}
		X = append(X, [3]float64{1 / s[i], (t[i] - tm) / s[i], step / s[i]})
		Y = append(Y, y[i]/s[i])
	}
	n := len(X)
	if before < acChangeMinBlocks || after < acChangeMinBlocks || n <= 3 {
		return 0
	}
	// The normal equations, 3 by 3.
	var xtx [3][3]float64
	var xty [3]float64
	for i, row := range X {
		for a := range 3 {
			xty[a] += row[a] * Y[i]
			for b := range 3 {
				xtx[a][b] += row[a] * row[b]
			}
		}
	}
	A := mat.NewSymDense(3, []float64{xtx[0][0], xtx[0][1], xtx[0][2], xtx[1][0], xtx[1][1], xtx[1][2], xtx[2][0], xtx[2][1], xtx[2][2]})
	var ch mat.Cholesky
	if !ch.Factorize(A) {
		return 0
	}
	var beta mat.VecDense
	if err := ch.SolveVecTo(&beta, mat.NewVecDense(3, xty[:])); err != nil {
		return 0
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return 0
	}
	var chi2 float64
	for i, row := range X {
		d := Y[i] - (row[0]*beta.AtVec(0) + row[1]*beta.AtVec(1) + row[2]*beta.AtVec(2))
		chi2 += d * d
	}
	v := inv.At(2, 2)
	if dof := n - 3; chi2 > float64(dof) {
		v *= chi2 / float64(dof)
	}
	if !(v > 0) {
		return 0
	}
	return math.Abs(beta.AtVec(2)) / math.Sqrt(v)
}

// acSplitTime places an AC window's split at a reading: of the readings
// of the densest sensor within two blocks (D, s) of near (the block
// boundary or block middle the step was found at, within a block of the
// step), the time that parts every sensor's waveform into two sine fits
// (the fundamental at the window's frequency and a constant, each part
// its own, t00 the basis origin) with the least residual sum of squares,
// each sensor's weighted by its noise (sigmas). NaN when no time leaves
// each sensor acChangeMinPart readings on either side.
func (p *processor) acSplitTime(r *reduced, sigmas []float64, near, D, t00 float64) float64 {
	w := 2 * math.Pi * r.freq
	// Per sensor and axis, prefix sums of the basis products g g^T (six
	// distinct), g y and y^2, g = (1, cos, sin), y less its mean.
	type prefix struct {
		t  []float64
		gg [][6]float64
		gy [3][][3]float64
		yy [3][]float64
	}
	ps := make([]prefix, len(r.ac))
	var ref []float64
	for k, d := range r.ac {
		n := len(d.t)
		pr := prefix{t: d.t, gg: make([][6]float64, n+1)}
		for a, col := range [][]float64{d.bx, d.by, d.bz} {
			m := mean(col)
			pr.gy[a] = make([][3]float64, n+1)
			pr.yy[a] = make([]float64, n+1)
			for i, t := range d.t {
				sn, cs := math.Sincos(w * (t - t00))
				y := col[i] - m
				if a == 0 {
					g := pr.gg[i]
					pr.gg[i+1] = [6]float64{g[0] + 1, g[1] + cs, g[2] + sn, g[3] + cs*cs, g[4] + cs*sn, g[5] + sn*sn}
				}
				g := pr.gy[a][i]
				pr.gy[a][i+1] = [3]float64{g[0] + y, g[1] + cs*y, g[2] + sn*y}
				pr.yy[a][i+1] = pr.yy[a][i] + y*y
			}
		}
		ps[k] = pr
		if len(d.t) > len(ref) {
			ref = d.t
		}
	}
	// rss is the residual sum of squares of the least-squares fit of
	// (1, cos, sin) to readings lo to hi of one axis.
	rss := func(pr *prefix, a, lo, hi int) float64 {
		var M [6]float64
		for c := range 6 {
			M[c] = pr.gg[hi][c] - pr.gg[lo][c]
		}
		var b [3]float64
		for c := range 3 {
			b[c] = pr.gy[a][hi][c] - pr.gy[a][lo][c]
		}
		A := mat.NewSymDense(3, []float64{M[0], M[1], M[2], M[1], M[3], M[4], M[2], M[4], M[5]})
		var ch mat.Cholesky
		if !ch.Factorize(A) {
			return math.NaN()
		}
		var x mat.VecDense
		if err := ch.SolveVecTo(&x, mat.NewVecDense(3, b[:])); err != nil {
			return math.NaN()
		}
		return pr.yy[a][hi] - pr.yy[a][lo] - (x.AtVec(0)*b[0] + x.AtVec(1)*b[1] + x.AtVec(2)*b[2])
	}
	best, bestAt := math.Inf(1), math.NaN()
	i0 := sort.SearchFloat64s(ref, near-2*D)
	i1 := sort.SearchFloat64s(ref, near+2*D)
	for i := i0; i <= i1 && i < len(ref); i++ {
		at := ref[i]
		var cost float64
		ok := true
		for k := range ps {
			pr := &ps[k]
			n := len(pr.t)
			n1 := sort.SearchFloat64s(pr.t, at)
			if m := acChangeMinPart(pr.t, r.freq); n1 < m || n-n1 < m {
				ok = false
				break
			}
			for a := range 3 {
				cost += (rss(pr, a, 0, n1) + rss(pr, a, n1, n)) / (sigmas[k] * sigmas[k])
			}
		}
		if ok && cost < best {
			best, bestAt = cost, at
		}
	}
	return bestAt
}

// acChangeMinPart is the fewest readings of a sensor (times t) in either
// part of a split AC window: a cycle's, and enough for the fundamental's
// fit (acChangeBlockRuns per column).
func acChangeMinPart(t []float64, freq float64) int {
	m := acChangeBlockRuns * acCols(1)
	if n := len(t); n > 1 && t[n-1] > t[0] {
		m = max(m, int(math.Ceil(float64(n-1)/(t[n-1]-t[0])/freq)))
	}
	return m
}

// phaseOf returns a solve's phase of conductor i, degrees, as a pointer
// (nil without one).
func phaseOf(out *SolveOutput, i int) *float64 {
	if out == nil || i >= len(out.Phase) {
		return nil
	}
	v := out.Phase[i]
	return &v
}
