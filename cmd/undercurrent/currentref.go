package main

import (
	"context"
	"fmt"
	"math"
	"strings"

	"github.com/spf13/pflag"

	"undercurrent/calibrate"
	"undercurrent/ingest"
	"undercurrent/report"
)

// currentRefFlags are --current-reference and its column and unit flags: a
// record of the conductors' current in time (logged at a rectifier or by a
// clamp meter) that the DC fits scale each reading's conductor field by.
type currentRefFlags struct {
	path    string
	columns []string
	units   []string
	// dropped is, once the record was tested against the fitted currents
	// and did not explain them (testCurrentReference), why: the run is
	// then fitted again without the scaling and the warning says so.
	dropped string
}

func (c *currentRefFlags) setFlags(fs *pflag.FlagSet) {
	c.dropped = "" // one locate's options serve every run of the process
	fs.StringVar(&c.path, "current-reference", "", "a record of the conductors' current in time, `FILE` (CSV, Arrow or Parquet; columns time and current, in A unless the name or --current-reference-unit says mA or kA), logged at the rectifier or by a clamp meter while the survey was walked: each reading's conductor field (not the background) is scaled by the record's current at its time (linear between samples) over its mean across the survey, so the currents fitted are those at that mean, and a load that swings during the walk (trams, trains) makes no phantom lines; DC only")
	fs.StringSliceVar(&c.columns, "current-reference-column", nil, "name the current record's columns, `CANON=NAME` as --column does for the survey logs (time=Time,current=I_rect)")
	fs.StringSliceVar(&c.units, "current-reference-unit", nil, "units of the current record's columns, `CANON=UNIT` (current=kA, time=ms)")
}

// check refuses the flags that need --current-reference without it, and
// the record with --freq (an AC fit's currents are not scaled).
func (c *currentRefFlags) check(o *locateOptions) error {
	switch {
	case c.path == "" && len(c.columns) > 0:
		return usageErrorf("--current-reference-column needs --current-reference")
	case c.path == "" && len(c.units) > 0:
		return usageErrorf("--current-reference-unit needs --current-reference")
	case c.path != "" && o.freq > 0:
		return usageErrorf("--current-reference scales DC fits only; it does not apply with --freq")
	}
	return nil
}

// applyCurrentReference reads the current record, when one is given, and
// sets each group's per-reading ratio (group.scale, inverse.Problem.Scale):
// the record's current at the reading's time over its time average across
// the survey (calibrate.CurrentRatios). A record that does not cover the
// survey's times, or whose current is missing or not positive there, is
// refused, naming the file. The run's notes say to what current the
// currents are scaled.
func applyCurrentReference(ctx context.Context, o *locateOptions, sv *survey) error {
	path := o.curRef.path
	if path == "" {
		return nil
	}
	opts := []ingest.Option{ingest.WithCurrentRecord(true), ingest.WithAllowMissing(true)}
	if len(o.curRef.columns) > 0 {
		opts = append(opts, ingest.WithColumns(o.curRef.columns...))
	}
	if len(o.curRef.units) > 0 {
		opts = append(opts, ingest.WithUnits(o.curRef.units...))
	}
	s, err := readSamples(ctx, path, opts...)
	if err != nil {
		if isInterrupt(err) {
			return err
		}
		msg := strings.ReplaceAll(strings.ReplaceAll(err.Error(), "--column ", "--current-reference-column "), "--unit ", "--current-reference-unit ")
		return fmt.Errorf("%s (the current record, --current-reference)", msg)
	}
	for _, w := range s.Warnings {
		sv.warnings = append(sv.warnings, path+": "+cliWording(w))
	}
	if o.curRef.dropped != "" {
		sv.doc.Inputs = append(sv.doc.Inputs, fileInput("current reference (not applied)", path, s.Len()))
		sv.warnings = append(sv.warnings, o.curRef.dropped)
		return nil
	}
	var at []float64
	for _, g := range sv.groups {
		at = append(at, g.stamps...)
	}
	cr, err := calibrate.CurrentRatios(path, s.Time, s.Current, at)
	if err != nil {
		return err
	}
	k := 0
	for _, g := range sv.groups {
		g.scale = cr.Ratio[k : k+len(g.stamps) : k+len(g.stamps)]
		k += len(g.stamps)
	}
	sv.doc.Inputs = append(sv.doc.Inputs, fileInput("current reference", path, s.Len()))
	sv.doc.Notes = append(sv.doc.Notes, fmt.Sprintf("currents scaled to the reference's mean of %.4g A (%s, %.4g to %.4g A during the survey): each reading's conductor field was scaled by the recorded current at its time over that mean, so, if every conductor's current follows the record, every current here is the conductors' current when %s reads %.4g A",
		cr.Mean, path, cr.Min, cr.Max, path, cr.Mean))
	return nil
}

// refShare is the test of one conductor's fitted currents against the
// current record: each station's current unscaled (u = I·r̄, the current
// it carried as walked, r̄ the mean ratio of its group's readings) fitted
// as u = a + b·r̄ by weighted least squares. share = b/(a+b) is the part
// of the conductor's current at the record's mean that follows the
// record: 1 for a conductor whose current is the record's (the scaled
// currents agree whatever r̄), 0 for one whose current does not change
// with it (a CP pipe beside a railway given the traction record: its
// scaled currents go as 1/r̄). sigma is share's, widened by the fit's
// scatter (chi-square per degree of freedom) where that exceeds 1.
type refShare struct {
	name         string
	n            int
	rmin, rmax   float64
	share, sigma float64
}

// refTestable: the stations' mean ratios must span 5 % and the fit have
// three stations or more; with less the share cannot be told.
func (r refShare) testable() bool {
	return r.n >= 3 && r.rmin > 0 && r.rmax/r.rmin > 1.05 && !math.IsNaN(r.share) && r.sigma > 0 && !math.IsInf(r.sigma, 0)
}

// follows reports whether the share is 1 within three sigma or within 0.1,
// with a sigma of 0.25 or less (a wider one cannot tell a conductor that
// follows the record from one that carries a third of its current).
func (r refShare) follows() bool {
	d := math.Abs(1 - r.share)
	return r.sigma <= 0.25 && (d <= 3*r.sigma || d <= 0.1)
}

// departs reports whether the share differs from 1 by more than three
// sigma and more than 0.1.
func (r refShare) departs() bool {
	d := math.Abs(1 - r.share)
	return d > 3*r.sigma && d > 0.1
}

// Each station's sigma is widened in quadrature by refFloor of its current
// (a conductor's current changes along a route by more than a sound fit's
// sigma says: the stations' own scatter), and the station furthest from
// the fit is dropped while it lies more than refCut sigma from it and
// three or more are left (a fit spoiled by a current that changed while
// its traverse was walked).
const (
	refFloor = 0.05
	refCut   = 4.0
)

// stationShare fits u = a + b·r̄ to the stations (refShare).
func stationShare(name string, st []report.Station, rbar map[string]float64) refShare {
	out := refShare{name: name, share: math.NaN(), rmin: math.Inf(1), rmax: math.Inf(-1)}
	type pt struct{ r, u, w float64 }
	var pts []pt
	for i := range st {
		s := &st[i]
		r, ok := rbar[s.Key]
		if !ok || !(r > 0) || !s.Used || !(s.CurrentSigma > 0) || math.IsNaN(s.Current) || math.IsInf(s.CurrentSigma, 0) {
			continue
		}
		u, su := s.Current*r, s.CurrentSigma*r
		pts = append(pts, pt{r, u, 1 / (su*su + refFloor*refFloor*u*u)})
	}
	for {
		out.n = len(pts)
		if out.n < 3 {
			return out
		}
		var sw, swr, swrr, swu, swru float64
		out.rmin, out.rmax = math.Inf(1), math.Inf(-1)
		for _, p := range pts {
			sw += p.w
			swr += p.w * p.r
			swrr += p.w * p.r * p.r
			swu += p.w * p.u
			swru += p.w * p.r * p.u
			out.rmin, out.rmax = math.Min(out.rmin, p.r), math.Max(out.rmax, p.r)
		}
		det := sw*swrr - swr*swr
		if !(det > 0) {
			return out
		}
		a := (swrr*swu - swr*swru) / det
		b := (sw*swru - swr*swu) / det
		chi2, worst, wi := 0.0, 0.0, -1
		for i, p := range pts {
			d := p.u - a - b*p.r
			chi2 += p.w * d * d
			if z := math.Abs(d) * math.Sqrt(p.w); z > worst {
				worst, wi = z, i
			}
		}
		if worst > refCut && len(pts) > 3 {
			pts = append(pts[:wi], pts[wi+1:]...)
			continue
		}
		// Covariance of (a, b), widened by the scatter about the fit.
		k := math.Max(1, chi2/float64(out.n-2))
		vaa, vbb, vab := k*swrr/det, k*sw/det, -k*swr/det
		c := a + b
		if c == 0 {
			return out
		}
		out.share = b / c
		// share = b/(a+b): d/da = -b/c², d/db = a/c².
		ga, gb := -b/(c*c), a/(c*c)
		out.sigma = math.Sqrt(math.Max(0, ga*ga*vaa+gb*gb*vbb+2*ga*gb*vab))
		return out
	}
}

// testCurrentReference tests the current record against the fitted
// currents of each conductor followed along the route (conductor 1 and
// the further tracks): a record that is the conductors' current explains
// their currents at traverses walked at different ratios; one that is not
// (the traction current given for a CP pipe that carries a share of it)
// does not, and its scaling would make currents walked in quiet periods
// read as if at the record's mean. It returns the notes and warnings to
// add, and drop (why) when no conductor tested follows the record and at
// least one does not: the run is then fitted again without the scaling.
// Found in review: the traction record on a CP pipe gave 3.8-5.1 A for a
// survey mean of 1.5-2.2 A, all graded sound, and a note that said those
// were the pipe's currents.
func testCurrentReference(path string, doc *report.Document, sv *survey) (notes, warns []string, drop string) {
	if doc == nil || doc.Route == nil {
		return nil, nil, ""
	}
	rbar := map[string]float64{}
	for _, g := range sv.groups {
		if len(g.scale) == 0 {
			continue
		}
		sum := 0.0
		for _, v := range g.scale {
			sum += v
		}
		rbar[g.key] = sum / float64(len(g.scale))
	}
	tests := []refShare{stationShare("conductor 1", doc.Route.Stations, rbar)}
	for _, t := range doc.Conductors {
		tests = append(tests, stationShare(fmt.Sprintf("conductor %d", t.Number), t.Route.Stations, rbar))
	}
	var follow, not, untold []string
	doubt := false
	describe := func(r refShare) string {
		return fmt.Sprintf("%s: share %.2f ± %.2f from %d traverses walked at ratios %.3g to %.3g", r.name, r.share, r.sigma, r.n, r.rmin, r.rmax)
	}
	for _, r := range tests {
		switch {
		case !r.testable():
		case r.follows():
			follow = append(follow, describe(r))
		case r.departs():
			not = append(not, describe(r))
		default:
			untold = append(untold, describe(r))
			// More than two sigma short of 1: warned of, not noted.
			doubt = doubt || math.Abs(1-r.share) > 2*r.sigma
		}
	}
	const what = "the share of a conductor's current that follows the record, from its traverses' currents unscaled against the record's mean ratio while each was walked: 1 where the record is the conductor's current, 0 where its current does not change with the record"
	if len(not) == 0 {
		switch {
		case len(follow) > 0 && len(untold) > 0:
			notes = append(notes, fmt.Sprintf("the current record %s was tested against the fitted currents (%s): it explains %s; for %s the test cannot tell, and those currents are at the record's mean only if they follow it", path, what, strings.Join(follow, "; "), strings.Join(untold, "; ")))
		case len(follow) > 0:
			notes = append(notes, fmt.Sprintf("the current record %s was tested against the fitted currents (%s) and explains them: %s", path, what, strings.Join(follow, "; ")))
		case len(untold) > 0:
			msg := fmt.Sprintf("the current record %s was tested against the fitted currents (%s), but the test cannot tell whether they follow it (%s), so it is applied as given; if a conductor's current does not follow the record (a CP current beside a traction load, a stray share of it), its currents here are wrong by the ratio at which each traverse was walked", path, what, strings.Join(untold, "; "))
			if doubt {
				return nil, []string{msg}, ""
			}
			notes = append(notes, msg)
		default:
			notes = append(notes, fmt.Sprintf("the current record %s could not be tested against the fitted currents: no conductor has 3 usable traverses walked at record ratios more than 5%% apart, so it is applied as given; if a conductor's current does not follow the record (a CP current beside a traction load, a stray share of it), its currents here are wrong by the ratio at which each traverse was walked", path))
		}
		return notes, nil, ""
	}
	if len(follow) == 0 {
		drop = fmt.Sprintf("--current-reference %s was not applied: the fitted currents do not follow it (%s: %s), so scaling by it would give currents walked in quiet periods as if at the record's mean; the currents here are as walked, and a current that changed while a traverse was walked spoils that traverse's fit. Give the record of these conductors' own current, if there is one", path, what, strings.Join(not, "; "))
		return nil, nil, drop
	}
	warns = append(warns, fmt.Sprintf("the current record %s does not explain every conductor's currents (%s): it follows %s, but not %s; the scaling is kept, so the currents of the conductors that do not follow it are not their currents at the record's mean (they are wrong by the ratio at which each traverse was walked)", path, what, strings.Join(follow, "; "), strings.Join(not, "; ")))
	return nil, warns, ""
}
