package route

import "fmt"

// Mark is what a shallow-cover check makes of one station, for
// CoverRuns.
type Mark int

const (
	// MarkSkip is a station the check does not use (a failed fit, an
	// object's): it neither joins a run nor bounds one.
	MarkSkip Mark = iota
	// MarkClear is a station where the conductor is seen with enough
	// cover: it bounds a run.
	MarkClear
	// MarkUnseen is a station whose fit does not show the conductor, or
	// does not check its cover: it bounds a run, as the readings there do
	// not show the shallow conductor, but says nothing of its cover.
	MarkUnseen
	// MarkShort is a station where the cover may be shallower than the
	// minimum: it joins a run.
	MarkShort
)

// CoverRun is a run of successive MarkShort stations (Members, indices
// into the marks given to CoverRuns) and the nearest stations either side
// that bound it, MarkClear or MarkUnseen (Before and After, -1 where no
// station on that side does).
type CoverRun struct {
	Members       []int
	Before, After int
}

// CoverRuns finds the runs of successive MarkShort stations in marks,
// taken in route order, each with the stations that bound it: MarkSkip
// stations are passed over, so a failed fit beside a run does not bound
// it, and the next usable station does.
func CoverRuns(marks []Mark) []CoverRun {
	var out []CoverRun
	before := -1
	var run []int
	for i, m := range marks {
		switch m {
		case MarkShort:
			run = append(run, i)
		case MarkClear, MarkUnseen:
			if len(run) > 0 {
				out = append(out, CoverRun{Members: run, Before: before, After: i})
				run = nil
			}
			before = i
		}
	}
	if len(run) > 0 {
		out = append(out, CoverRun{Members: run, Before: before, After: -1})
	}
	return out
}

// Stop is a station as a cover bracket names it: its name and chainage,
// m.
type Stop struct {
	Name     string
	Chainage float64
	// Unseen is set on a bounding station whose fit does not show the
	// conductor (MarkUnseen).
	Unseen bool
}

func (s Stop) String() string { return fmt.Sprintf("%s (chainage %.1f m)", s.Name, s.Chainage) }

// Bracket is how far a run of shallow stations, First to Last, may reach:
// the shallow stretch is known only to lie between the nearest stations
// either side that bound the run (Before and After, nil where none). What
// names the conductor in the message ("the pair", "the line"); empty for
// the route's own conductor, which every usable station shows.
type Bracket struct {
	First, Last   Stop
	Before, After *Stop
	What          string
}

// BracketOf is the bracket of run, a CoverRun of stations named by stop.
func BracketOf(run CoverRun, stop func(i int, unseen bool) Stop, marks []Mark, what string) Bracket {
	b := Bracket{First: stop(run.Members[0], false), Last: stop(run.Members[len(run.Members)-1], false), What: what}
	if run.Before >= 0 {
		s := stop(run.Before, marks[run.Before] == MarkUnseen)
		b.Before = &s
	}
	if run.After >= 0 {
		s := stop(run.After, marks[run.After] == MarkUnseen)
		b.After = &s
	}
	return b
}

// Range is the chainage range of the bracket, m: from the station before
// the run to the one after it, or the run's own end station on a side
// where none bounds it.
func (b Bracket) Range() (from, to float64) {
	from, to = b.First.Chainage, b.Last.Chainage
	if b.Before != nil {
		from = b.Before.Chainage
	}
	if b.After != nil {
		to = b.After.Chainage
	}
	return from, to
}

// Reach says how far the shallow stretch may reach: to the nearest
// stations either side with enough cover, or whose fits do not show the
// conductor (which says nothing of its cover there), or past the run's
// end station where no station on that side bounds it.
func (b Bracket) Reach() string {
	what := b.What
	if what == "" {
		what = "the conductor"
	}
	clear := "with enough cover"
	if b.What != "" {
		clear = "where " + b.What + " is seen with enough cover"
	}
	if b.Before != nil && b.After != nil && b.Before.Unseen == b.After.Unseen {
		why := clear
		if b.Before.Unseen {
			why = fmt.Sprintf("whose fits do not show %s, which says nothing of its cover there", what)
		}
		return fmt.Sprintf("the shallow stretch may reach back to %s and on to %s, the nearest stations either side %s", b.Before, b.After, why)
	}
	if b.Before == nil && b.After == nil {
		if b.First == b.Last {
			return fmt.Sprintf("no other station has enough cover, so the shallow cover may continue past %s either way", b.First)
		}
		return fmt.Sprintf("no other station has enough cover, so the shallow cover may continue back past %s and on past %s", b.First, b.Last)
	}
	side := func(s *Stop, end Stop, way string) string {
		switch {
		case s == nil:
			return fmt.Sprintf("past %s, as no station %s it has enough cover", end, way)
		case s.Unseen:
			return fmt.Sprintf("to %s, the nearest station %s it, whose fit does not show %s, which says nothing of its cover there", s, way, what)
		}
		return fmt.Sprintf("to %s, the nearest station %s it %s", s, way, clear)
	}
	return fmt.Sprintf("the shallow stretch may reach back %s, and on %s", side(b.Before, b.First, "before"), side(b.After, b.Last, "after"))
}
