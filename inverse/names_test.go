package inverse

import (
	"fmt"
	"slices"
	"testing"
)

// TestParamNames checks the parameter names against names formatted one by one, for
// up to six lines and five dipoles (beyond the ones named in advance), DC and AC, and
// every background model.
func TestParamNames(t *testing.T) {
	for _, bg := range []BackgroundModel{BackgroundNone, BackgroundUniform, BackgroundGradient} {
		for _, nrhs := range []int{1, 2} {
			for nl := range 7 {
				for nd := range 6 {
					sp := &separable{nrhs: nrhs, bg: bg, geom: make([]lineGeom, nl), dips: make([]dipGeom, nd)}
					for l := range sp.geom {
						sp.geom[l].holdAz, sp.geom[l].holdDip = l%2 == 1, l%3 == 2
					}
					if got, want := paramNames(sp), formattedNames(sp); !slices.Equal(got, want) {
						t.Fatalf("background %d, %d rhs, %d lines, %d dipoles:\n got %q\nwant %q", bg, nrhs, nl, nd, got, want)
					}
				}
			}
		}
	}
}

func formattedNames(sp *separable) []string {
	var names []string
	for l, g := range sp.geom {
		names = append(names, fmt.Sprintf("line%d.offset", l+1), fmt.Sprintf("line%d.height", l+1))
		if !g.holdAz {
			names = append(names, fmt.Sprintf("line%d.azimuth", l+1))
		}
		if !g.holdDip {
			names = append(names, fmt.Sprintf("line%d.dip", l+1))
		}
	}
	for d := range sp.dips {
		for _, ax := range []string{"east", "north", "up"} {
			names = append(names, fmt.Sprintf("dipole%d.%s", d+1, ax))
		}
	}
	bg := []string{"bg.e", "bg.n", "bg.u", "grad.ee", "grad.en", "grad.eu", "grad.nn", "grad.nu"}
	for k := range sp.nrhs {
		sfx := ""
		if sp.nrhs == 2 {
			sfx = []string{".re", ".im"}[k]
		}
		for l := range sp.geom {
			names = append(names, fmt.Sprintf("line%d.current%s", l+1, sfx))
		}
		for d := range sp.dips {
			for _, ax := range []string{"e", "n", "u"} {
				names = append(names, fmt.Sprintf("dipole%d.moment.%s%s", d+1, ax, sfx))
			}
		}
		for j := range sp.bg.columns() {
			names = append(names, bg[j]+sfx)
		}
	}
	return names
}
