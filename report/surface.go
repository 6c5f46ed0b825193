package report

import (
	"fmt"

	"undercurrent/inverse/route"
)

// Disturbances at or above the ground.
//
// The object search places its point dipole anywhere from 0.1 m under the
// lowest sensor down (dipoleSearch), which reaches above the ground when
// the sensors are carried 0.3 m over it. A short burst of interference at
// the sensor (a radio, a loose connection, a phone beside the logger: 2-5
// readings of 40-500 nT) is a narrow, strong anomaly that a point dipole
// just under the sensors explains far better than the conductor alone: in
// review such bursts on a 25 A line 1.1 m down were reported as "a buried
// steel or iron item" 0.02-0.13 m above the ground (2 to 11 sigma), the
// traverse's good current fit (25.04 A) was left out of the profile, and
// the summary still counted the traverse sound. With the ground level known
// (the fit's depths below ground, --reference-z or --sensor-height), an
// object whose centre the search places above the ground is no buried item:
// it is reported as a surface-disturbance finding (a steel object on the
// surface, a vehicle, interference at the sensor) and the traverse keeps
// its own conductor fit on the route. Without the ground level nothing
// changes.

// aboveGround reports whether the object ds found at fit f lies above the
// ground: the ground level is known to f's fit and the object's centre is
// placed above it (a negative depth below ground). A buried body's centre
// lies below the ground by at least its own size; one fitted above it is
// at the surface or over it, whatever its sigma.
func aboveGround(f *Fit, ds *dipoleSearch) bool {
	if f.Result == nil || f.Result.DepthReference != "ReferenceZ" || ds == nil || ds.obj == nil {
		return false
	}
	return ds.obj.Depth < 0
}

// surfaceFindings adds to r a surface-disturbance finding for each fit
// whose object checkDipoles found above the ground (aboveGround).
func surfaceFindings(fits []Fit, r *route.Route) {
	for i := range fits {
		f := &fits[i]
		o := f.surface
		if o == nil || f.Dipole {
			continue
		}
		where := f.Key
		fd := route.Finding{
			Kind:     route.KindSurfaceDisturbance,
			Severity: route.SeverityInfo,
			Position: o.Point,
			Keys:     []string{f.Key},
		}
		for k := range r.Stations {
			if p := &r.Stations[k]; p.Key == f.Key {
				where = fmt.Sprintf("%s (chainage %.1f m)", f.Key, p.Chainage)
				fd.From, fd.To = p.Chainage, p.Chainage
				break
			}
		}
		kept := "the traverse's own fit stays in the current and cover profile, though the disturbance's readings may pull it"
		if f.surfaceRefit {
			kept = "the traverse stays in the current and cover profile, its conductors refitted with the disturbance's field taken out"
		}
		fd.Message = fmt.Sprintf("the field at %s holds a local disturbance at or above the ground, not a buried item: a small magnetised source %s m above the ground, %.1f m from the conductor, explains it, most likely a steel object on the surface, a vehicle, or interference at the sensor (a radio, a loose connection, a phone near the logger); %s (fitted as a point dipole; information criterion lower by %.0f)",
			where, pm(-o.Depth, o.DepthSigma), o.Distance, kept, o.Evidence)
		fd.Values = []route.Value{
			{Name: "east", Value: o.Point[0], Sigma: o.PointSigma[0], Unit: "m"},
			{Name: "north", Value: o.Point[1], Sigma: o.PointSigma[1], Unit: "m"},
			{Name: "height above ground", Value: -o.Depth, Sigma: o.DepthSigma, Unit: "m"},
			{Name: "moment", Value: o.Moment, Sigma: o.MomentSigma, Unit: "A m^2"},
			{Name: "BIC lower by", Value: o.Evidence},
		}
		r.Findings = append(r.Findings, fd)
	}
}

// keepAboveGround marks f as holding the disturbance ds found above the
// ground and refits its conductors on its readings with the disturbance's
// field taken out (heldObjectFit, as for a traverse beside an object
// reported at another): the burst's readings would otherwise pull the
// line fit. When the refit fails f keeps its own fit. It reports whether
// f's fit changed.
func keepAboveGround(f *Fit, ds *dipoleSearch) bool {
	f.surface = ds.obj
	res, ok := heldObjectFit(f, ds, ds, f.Key)
	if !ok {
		return false
	}
	o := ds.obj
	res.Notes = append(res.Notes[:len(res.Notes)-1:len(res.Notes)-1], fmt.Sprintf(
		"a local disturbance at or above the ground (a point dipole at east %.2f m, north %.2f m, %.2f m above the ground: a surface object, a vehicle or interference at the sensor, see its surface-disturbance finding) is taken out of these readings before the conductors are fitted",
		o.Point[0], o.Point[1], -o.Depth))
	dropSearch(f)
	f.Result, f.surfaceRefit = res, true
	return true
}
