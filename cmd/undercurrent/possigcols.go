package main

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"undercurrent/ingest"
	"undercurrent/report"
)

// The log's own position sigma columns (--position-sigma-columns): which
// columns were read, in what unit, and values that cannot be a receiver's
// accuracy. Found in review: a std_h column meaning something else, or an
// hacc in millimetres with no suffix, showed only as "from the log's
// position sigma columns", and turned 0 of 13 sound fits into 13 of 13;
// an hacc of 0 in 30% of the rows (a receiver's "no estimate") was taken
// as exact, and the current pulls' RMS rose from 1.00 to 1.93 with no
// word why.

// sigmaColumns checks the DC log s's position sigma columns, read from
// path with opts: it names them with their unit (for the outputs,
// survey.sigmaCols), takes a value of exactly 0 as missing (as an empty
// cell), fills the missing values of a column that has some with the
// --position-sigma floor (the fit's own rule) or, without one, with the
// median of the log's other values in that column, and warns of both
// and of a column whose values do not look like an accuracy in the unit
// taken. It changes s.SigmaPlan and s.SigmaUp in place.
func sigmaColumns(o *locateOptions, sv *survey, path string, opts []ingest.Option, s *ingest.Samples) {
	if o.colPlan <= 0 || (s.SigmaPlan == nil && s.SigmaUp == nil) {
		return
	}
	src := map[string]ingest.ColumnMapping{}
	if r, err := ingest.Open(path, append(append([]ingest.Option(nil), opts...), ingest.WithOrigin(ingest.Geodetic{}))...); err == nil {
		for _, m := range ingest.Mappings(r) {
			if m.Column == ingest.ColSigmaPlan || m.Column == ingest.ColSigmaUp {
				src[m.Column] = m
			}
		}
		r.Release()
	}
	for _, c := range []struct {
		role  string
		v     []float64
		floor float64
	}{{ingest.ColSigmaPlan, s.SigmaPlan, o.posPlan}, {ingest.ColSigmaUp, s.SigmaUp, o.posUp}} {
		if c.v == nil {
			continue
		}
		m := src[c.role]
		name := m.Source
		if name == "" {
			name = c.role
		}
		unit := m.Unit
		if unit == "" {
			unit = "m"
		}
		label := name + " (" + unit + ")"
		if !slices.Contains(sv.sigmaCols, label) {
			sv.sigmaCols = append(sv.sigmaCols, label)
		}
		var got []float64
		zeros, empty := 0, 0
		for i, x := range c.v {
			switch {
			case x == 0:
				zeros++
				c.v[i] = math.NaN()
			case math.IsNaN(x):
				empty++
			default:
				got = append(got, x)
			}
		}
		if len(got) == 0 {
			sv.warnings = append(sv.warnings, fmt.Sprintf("%s: the position sigma column %s (read as %s) holds no value above 0 (%d zeros, %d empty): a 0 is taken as no estimate, so its readings take %s; if the column is not an accuracy, leave it out with --position-sigma-columns off",
				path, name, c.role, zeros, empty, floorWords(c.floor)))
			continue
		}
		med := medianOf(got)
		if zeros+empty > 0 {
			fill, how := c.floor, fmt.Sprintf("the %.3g m given with --position-sigma", c.floor)
			if c.floor <= 0 {
				fill, how = med, fmt.Sprintf("the median of its other values, %.3g m (give --position-sigma to set it)", med)
			}
			for i, x := range c.v {
				if math.IsNaN(x) {
					c.v[i] = fill
				}
			}
			sv.warnings = append(sv.warnings, fmt.Sprintf("%s: %d of %d rows have no estimate in the position sigma column %s (read as %s): %d hold 0 and %d are empty; a 0 is taken as no estimate, not as an exact position (taken as exact, such readings outweighed the rest and every fit read poor), and these readings take %s",
				path, zeros+empty, len(c.v), name, c.role, zeros, empty, how))
		}
		// An accuracy in metres: a receiver's is centimetres to a few
		// metres. Whole numbers above 5 with no unit stated are
		// millimetres or centimetres read as metres.
		whole := true
		for _, x := range got {
			if x != math.Trunc(x) {
				whole = false
				break
			}
		}
		sigma := med * map[string]float64{ingest.ColSigmaPlan: o.colPlan, ingest.ColSigmaUp: o.colUp}[c.role]
		defUnit := m.UnitFrom == "" || m.UnitFrom == ingest.UnitDefault
		if sigma > 10 || (whole && med > 5 && defUnit) {
			sv.warnings = append(sv.warnings, fmt.Sprintf("%s: the position sigma column %s (read as %s, in %s) has a median of %.4g %s, not a receiver's position accuracy in %s: if it is in millimetres or centimetres say so (--unit %s=mm, or the name %s_mm); if it holds something else, leave it out with --position-sigma-columns off",
				path, name, c.role, unit, med, unit, unit, c.role, name))
		}
	}
}

// floorWords says what a reading with no position sigma of its own takes.
func floorWords(floor float64) string {
	if floor > 0 {
		return fmt.Sprintf("the %.3g m given with --position-sigma", floor)
	}
	return "none (the positions taken as exact; give --position-sigma to set one)"
}

// nameSigmaColumns puts the columns read as position sigmas into the
// document (report.PositionSigma.Sources) and its uncertainty note.
func nameSigmaColumns(doc *report.Document, sv *survey) {
	p := doc.PositionSigma
	if p == nil || !p.Columns || len(sv.sigmaCols) == 0 {
		return
	}
	p.Sources = strings.Join(sv.sigmaCols, " and ")
	if len(sv.sigmaCols) > 2 {
		p.Sources = strings.Join(sv.sigmaCols[:len(sv.sigmaCols)-1], ", ") + " and " + sv.sigmaCols[len(sv.sigmaCols)-1]
	}
	doc.UncertaintyNote = report.UncertaintyNoteFor(p)
}
