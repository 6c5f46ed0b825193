package inverse

import (
	"fmt"
	"reflect"
	"strings"
)

// backgroundNames name the background's strengths (Settings.Background, or a
// Background source) in Result.ParamNames and in errors: the uniform field's east,
// north and up components, then with the gradient its five independent terms.
var backgroundNames = []string{"bg.e", "bg.n", "bg.u", "grad.ee", "grad.en", "grad.eu", "grad.nn", "grad.nu"}

// alongNames name BackgroundAlong's three terms after the uniform field's.
var alongNames = []string{"bg.e", "bg.n", "bg.u", "along.e", "along.n", "along.u"}

// backgroundName names column k of the background bg.
func backgroundName(bg BackgroundModel, k int) string {
	if bg == BackgroundAlong && k < len(alongNames) {
		return alongNames[k]
	}
	return backgroundNames[k]
}

// sourceLabel names source i of the caller's list (list: the argument's name, as
// "sources") with its kind: "sources[1] (Segment)", "sources[0] (*Line)"; a source
// given alone (list "") is "the source (Dipole)".
func sourceLabel(list string, i int, src Source) string {
	kind := strings.ReplaceAll(fmt.Sprintf("%T", src), "inverse.", "")
	if list == "" {
		return fmt.Sprintf("the source (%s)", kind)
	}
	return fmt.Sprintf("%s[%d] (%s)", list, i, kind)
}

// strengthName names column k of a linear fit of sources (the caller's list, named
// list) followed by the background columns of Settings.Background, in the caller's
// terms: which strength of which source, or which background term.
func strengthName(list string, sources []Source, k int) string {
	for i, src := range sources {
		n := src.NumStrengths()
		if k >= n {
			k -= n
			continue
		}
		what := sourceLabel(list, i, src)
		switch src.(type) {
		case Line, *Line, Segment, *Segment:
			return "the current of " + what
		case Polyline, *Polyline:
			return fmt.Sprintf("the current of leg %d (vertex %d to %d) of %s", k, k, k+1, what)
		case Dipole, *Dipole:
			return fmt.Sprintf("the %s moment of %s", []string{"east", "north", "up"}[k], what)
		case Background, *Background:
			name := backgroundNames[k]
			if b, ok := src.(Background); ok && !b.Gradient && b.Along != ([3]float64{}) {
				name = alongNames[k]
			} else if b, ok := src.(*Background); ok && !b.Gradient && b.Along != ([3]float64{}) {
				name = alongNames[k]
			}
			return fmt.Sprintf("the term %s of %s", name, what)
		}
		if n == 1 {
			return "the strength of " + what
		}
		return fmt.Sprintf("strength %d of %s", k, what)
	}
	if k < len(backgroundNames) {
		return fmt.Sprintf("the background term %s (Settings.Background)", backgroundNames[k])
	}
	return fmt.Sprintf("background strength %d", k)
}

// inseparable is the error of a fit whose column k (strengthName) the readings do not
// set apart from the others.
func inseparable(list string, sources []Source, k int) error {
	return fmt.Errorf("inverse: %s cannot be separated from the others with these readings", strengthName(list, sources, k))
}

// onSourceError is sourceBasis' error: the field of the source is not finite at a
// reading (the reading lies on it, or on its path). Callers name the source.
type onSourceError struct {
	reading int
	at      [3]float64
	path    bool
}

func (e *onSourceError) Error() string { return e.named("the source") }

// named words e with the source named as the caller knows it.
func (e *onSourceError) named(what string) string {
	on := ""
	if e.path {
		on = " (or its path, Problem.Travel)"
	}
	return fmt.Sprintf("inverse: reading %d at (%.4g, %.4g, %.4g) m lies on %s%s: the field is not finite there", e.reading, e.at[0], e.at[1], e.at[2], what, on)
}

// nameOnSource returns err with the source named what when it is an onSourceError,
// else err.
func nameOnSource(err error, what string) error {
	if e, ok := err.(*onSourceError); ok {
		return fmt.Errorf("%s", e.named(what))
	}
	return err
}

// checkSources refuses, naming fn and the source by its index in the list named list
// and its kind (list "": a source given alone), a nil source or a nil pointer to one (before, they panicked in the
// basis), a source with no strengths (a Polyline of fewer than two vertices:
// before, it was accepted and fitted nothing), and a Line, Segment, Polyline or
// Dipole whose geometry is not finite or has no extent (a Line's Dir of zero, a
// Segment's ends or a Polyline's successive vertices in one place: before, the first
// was reported as "reading 0 lies on source 0", the others as a strength that cannot
// be separated).
func checkSources(fn, list string, sources []Source) error {
	for i, src := range sources {
		at := fmt.Sprintf("%s[%d]", list, i)
		if list == "" {
			at = "the source"
		}
		if src == nil {
			return fmt.Errorf("inverse: %s: %s is nil", fn, at)
		}
		if v := reflect.ValueOf(src); v.Kind() == reflect.Pointer && v.IsNil() {
			return fmt.Errorf("inverse: %s: %s is a nil %T", fn, at, src)
		}
		if why := badGeometry(src); why != "" {
			return fmt.Errorf("inverse: %s: %s %s", fn, sourceLabel(list, i, src), why)
		}
	}
	return nil
}

// badGeometry says what is wrong with the geometry of src, or "".
func badGeometry(src Source) string {
	switch v := src.(type) {
	case *Line:
		return badGeometry(*v)
	case *Segment:
		return badGeometry(*v)
	case *Polyline:
		return badGeometry(*v)
	case *Dipole:
		return badGeometry(*v)
	case Line:
		if !finite3(v.Point) || !finite3(v.Dir) {
			return "has a coordinate that is not finite"
		}
		if v.Dir == [3]float64{} {
			return "has no direction: Dir is zero"
		}
	case Segment:
		if !finite3(v.A) || !finite3(v.B) {
			return "has a coordinate that is not finite"
		}
		if v.A == v.B {
			return "has no length: its ends A and B are one point"
		}
	case Polyline:
		if len(v.Vertices) < 2 {
			return fmt.Sprintf("has %d vertices: a Polyline needs at least 2", len(v.Vertices))
		}
		for k, p := range v.Vertices {
			if !finite3(p) {
				return fmt.Sprintf("has vertex %d not finite", k)
			}
			if k > 0 && p == v.Vertices[k-1] {
				return fmt.Sprintf("has vertices %d and %d in one place: leg %d has no length", k-1, k, k-1)
			}
		}
	case Dipole:
		if !finite3(v.Pos) {
			return "has a position that is not finite"
		}
	}
	if src.NumStrengths() < 1 {
		return "has no strengths"
	}
	return ""
}

func finite3(v [3]float64) bool { return finite(v[0]) && finite(v[1]) && finite(v[2]) }

// inseparableColumn is solveLinear's error: column k is not set apart from the others
// (its pivot vanishes). Callers word it with inseparable.
type inseparableColumn int

func (k inseparableColumn) Error() string {
	return fmt.Sprintf("inverse: strength %d cannot be separated from the others with these readings", int(k))
}
