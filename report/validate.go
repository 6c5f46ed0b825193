package report

import (
	"fmt"
	"math"
	"reflect"
	"strings"
)

// Validate checks that d can be written and read back: every number is
// finite (JSON has no NaN), the kinds are known, and the profile columns
// have equal lengths. The error names the offending field by its JSON path
// ("report: groups[2].sources[0].current_a is NaN").
func (d *Document) Validate() error {
	if d == nil {
		return fmt.Errorf("report: nil document")
	}
	if d.SchemaVersion < 1 || d.SchemaVersion > SchemaVersion {
		return fmt.Errorf("report: schema_version %d is not supported (this program reads 1 to %d)", d.SchemaVersion, SchemaVersion)
	}
	if b := finiteAll(reflect.ValueOf(d).Elem()); b != nil {
		return b.error()
	}
	if d.Frame.Kind != FrameLocalENU {
		return fmt.Errorf("report: frame.kind %q is not %q", d.Frame.Kind, FrameLocalENU)
	}
	if o := d.Frame.Origin; o != nil && (math.Abs(o.Lat) > 90 || math.Abs(o.Lon) > 180) {
		return fmt.Errorf("report: frame.origin (%g, %g) is not a latitude and longitude in degrees", o.Lat, o.Lon)
	}
	switch d.DepthReference.Kind {
	case DepthBelowSensors, DepthBelowGround:
	default:
		return fmt.Errorf("report: depth_reference.kind %q is not %q or %q", d.DepthReference.Kind, DepthBelowSensors, DepthBelowGround)
	}
	if g := d.DepthReference.GroundSigma; g < 0 || math.IsNaN(g) || math.IsInf(g, 0) {
		return fmt.Errorf("report: depth_reference.ground_sigma_m %g is not a length >= 0", g)
	}
	if p := d.PositionSigma; p != nil && !(p.Plan >= 0 && p.Up >= 0 && p.Plan+p.Up > 0) {
		return fmt.Errorf("report: position_sigma (%g m plan, %g m up) is not two lengths >= 0, not both 0", p.Plan, p.Up)
	}
	switch d.Signal.Mode {
	case SignalDC, SignalAC:
	default:
		return fmt.Errorf("report: signal.mode %q is not %q or %q", d.Signal.Mode, SignalDC, SignalAC)
	}
	for i, g := range d.Groups {
		if p := g.Profile; p != nil {
			n := len(p.Positions)
			if len(p.Offset) != n || len(p.Measured) != n || len(p.Predicted) != n {
				return fmt.Errorf("report: groups[%d] (key %q).profile: %d positions, %d offsets, %d measured, %d predicted: lengths differ",
					i, g.Key, n, len(p.Offset), len(p.Measured), len(p.Predicted))
			}
			if q, qp := len(p.MeasuredQuadrature), len(p.PredictedQuadrature); (q != 0 || qp != 0) && (q != n || qp != n) {
				return fmt.Errorf("report: groups[%d] (key %q).profile: %d positions, %d measured and %d predicted quadrature: lengths differ",
					i, g.Key, n, q, qp)
			}
		}
	}
	tracks := map[int]bool{}
	for i, c := range d.Conductors {
		if c.Number < 2 || tracks[c.Number] {
			return fmt.Errorf("report: conductors[%d].number %d: want a number from 2 up, each once (1 is the route's own conductor)", i, c.Number)
		}
		tracks[c.Number] = true
	}
	for i, f := range d.Findings {
		switch f.Severity {
		case SeverityWarning, SeverityCaution, SeverityInfo:
		default:
			return fmt.Errorf("report: findings[%d].severity %q is not warning, caution or info", i, f.Severity)
		}
		if f.Conductor != 0 && !tracks[f.Conductor] {
			return fmt.Errorf("report: findings[%d].conductor %d names no conductor in conductors[]", i, f.Conductor)
		}
	}
	return nil
}

// badFloat is a non-finite value found by finiteAll; path is built on the
// way back up, so that walking a valid document formats nothing.
type badFloat struct {
	path []string // innermost first
	v    float64
}

// finiteAll walks v and reports the first float that is NaN or infinite.
func finiteAll(v reflect.Value) *badFloat {
	switch v.Kind() {
	case reflect.Float64, reflect.Float32:
		if f := v.Float(); math.IsNaN(f) || math.IsInf(f, 0) {
			return &badFloat{v: f}
		}
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			return finiteAll(v.Elem())
		}
	case reflect.Struct:
		t := v.Type()
		for i := 0; i < t.NumField(); i++ {
			if b := finiteAll(v.Field(i)); b != nil {
				name, _, _ := strings.Cut(t.Field(i).Tag.Get("json"), ",")
				if name == "" || name == "-" {
					name = t.Field(i).Name
				}
				b.path = append(b.path, "."+name)
				return b
			}
		}
	case reflect.Slice, reflect.Array:
		if v.Type().Elem().Kind() == reflect.Float64 {
			for i := 0; i < v.Len(); i++ {
				if f := v.Index(i).Float(); math.IsNaN(f) || math.IsInf(f, 0) {
					return &badFloat{v: f, path: []string{fmt.Sprintf("[%d]", i)}}
				}
			}
			return nil
		}
		for i := 0; i < v.Len(); i++ {
			if b := finiteAll(v.Index(i)); b != nil {
				seg := fmt.Sprintf("[%d]", i)
				if k := v.Index(i); k.Kind() == reflect.Struct && k.Type() == reflect.TypeFor[Group]() && k.FieldByName("Key").String() != "" {
					seg += fmt.Sprintf(" (key %q)", k.FieldByName("Key").String())
				}
				b.path = append(b.path, seg)
				return b
			}
		}
	case reflect.Map:
		// Settings hold strings only.
	}
	return nil
}

func (b *badFloat) error() error {
	var sb strings.Builder
	for i := len(b.path) - 1; i >= 0; i-- {
		sb.WriteString(b.path[i])
	}
	return fmt.Errorf("report: %s is %v", strings.TrimPrefix(sb.String(), "."), b.v)
}
