package report

import "encoding/json"

// fitted reports whether g's fit ran and gave estimates of its own: a
// residual RMS, a background and a chi-square. It is false for a group
// whose fit failed before fitting anything (too few readings for a line),
// which Build leaves with no Status; such a group's RMS, background and
// chi-square are not estimates and are left out or empty in every output
// rather than written as 0, which would read as a perfect fit.
func (g *Group) fitted() bool {
	return g.OK || g.Status != "" || g.RMS != 0 || g.DOF > 0
}

// MarshalJSON writes g as an element of results.json's groups. A group
// whose fit estimated nothing (fitted) has no rms_nt, background_nt,
// background_sigma_nt, chi2 or dof; its other members are as for any
// group. ReadJSON reads the missing members as zero.
func (g Group) MarshalJSON() ([]byte, error) {
	type plain Group // Group's members without this method
	if g.fitted() {
		return json.Marshal(plain(g))
	}
	// The members named here take the place of plain's of the same name
	// (the shallower field wins) and, nil, are left out.
	return json.Marshal(struct {
		plain
		RMS             *float64    `json:"rms_nt,omitempty"`
		Background      *[3]float64 `json:"background_nt,omitempty"`
		BackgroundSigma *[3]float64 `json:"background_sigma_nt,omitempty"`
		Chi2            *float64    `json:"chi2,omitempty"`
		DOF             *int        `json:"dof,omitempty"`
	}{plain: plain(g)})
}

// GroupRMS is a group's residual RMS, nT, as the crew report's table of
// fits writes it (num: three significant figures with their trailing
// zeros, "1.00", "0.950", "12.0"), for the terminal summary to agree with
// it; ok is false, and the text empty, when the fit estimated none
// (fitted), which is then not written as 0, or g is nil.
func GroupRMS(g *Group) (text string, ok bool) {
	if g == nil || !g.fitted() {
		return "", false
	}
	return num(g.RMS), true
}

// MarshalJSON writes s as an element of a group's sources in results.json.
// A line whose current the readings do not determine (Unidentifiable
// holds "current": one of a go-and-return pair that collapsed onto one
// place, whose fields cancel) has no current_sigma_a: its sigma is not
// 0, which would read as an exact current, but undetermined, as
// results.csv leaves the cell empty and route.geojson leaves it out
// (found in review: ±237 A lines written with a sigma of 0). ReadJSON
// reads the missing member as zero.
func (s Source) MarshalJSON() ([]byte, error) {
	type plain Source // Source's members without this method
	if s.Kind == KindDipole || !unresolved(&s, "current") {
		return json.Marshal(plain(s))
	}
	return json.Marshal(struct {
		plain
		CurrentSigma *float64 `json:"current_sigma_a,omitempty"`
	}{plain: plain(s)})
}
