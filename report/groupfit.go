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

// MarshalJSON writes g as an element of results.json's groups, with
// "fit": its worth in the words results.csv's fit column and
// route.geojson's "fit" property use (fitStatus: sound, used with care,
// failed), so that a reader need not combine ok and problem itself;
// ReadJSON ignores it, as it follows from ok and problem. A group whose
// fit estimated nothing (fitted) has no rms_nt, background_nt,
// background_sigma_nt, chi2 or dof; its other members are as for any
// group. ReadJSON reads the missing members as zero.
func (g Group) MarshalJSON() ([]byte, error) {
	type plain Group // Group's members without this method
	if g.fitted() {
		return json.Marshal(struct {
			plain
			Fit string `json:"fit"`
		}{plain(g), fitStatus(&g)})
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
		Fit             string      `json:"fit"`
	}{plain: plain(g), Fit: fitStatus(&g)})
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
// (found in review: ±237 A lines written with a sigma of 0). A dipole (a
// magnetised object) has no direction, current_a, offset_m, azimuth_deg,
// dip_deg, their sigmas or span_m: a point has none of them, and each
// was written as 0, which read as a measured current of 0 A bearing due
// north (found in review), where results.csv leaves the cells empty and
// route.geojson leaves them out. Left out rather than null: a script
// that reads a dipole's current_a fails at once instead of taking null
// for 0, and the document already leaves out what does not apply
// (phase_deg for DC, moment_a_m2 for a line). Its phase_deg, for AC, is
// kept: the reference phase its moment_a_m2 is read at. ReadJSON reads
// the missing members as zero.
func (s Source) MarshalJSON() ([]byte, error) {
	type plain Source // Source's members without this method
	// The members named here take the place of plain's of the same name
	// (the shallower field wins) and, nil, are left out.
	if s.Kind == KindDipole {
		return json.Marshal(struct {
			plain
			Direction    *[3]float64 `json:"direction,omitempty"`
			Current      *float64    `json:"current_a,omitempty"`
			CurrentSigma *float64    `json:"current_sigma_a,omitempty"`
			Offset       *float64    `json:"offset_m,omitempty"`
			OffsetSigma  *float64    `json:"offset_sigma_m,omitempty"`
			Azimuth      *float64    `json:"azimuth_deg,omitempty"`
			AzimuthSigma *float64    `json:"azimuth_sigma_deg,omitempty"`
			Dip          *float64    `json:"dip_deg,omitempty"`
			DipSigma     *float64    `json:"dip_sigma_deg,omitempty"`
			Span         *[2]float64 `json:"span_m,omitempty"`
		}{plain: plain(s)})
	}
	if !unresolved(&s, "current") {
		return json.Marshal(plain(s))
	}
	return json.Marshal(struct {
		plain
		CurrentSigma *float64 `json:"current_sigma_a,omitempty"`
	}{plain: plain(s)})
}
