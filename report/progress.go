package report

import "sync"

// ProgressFunc is told how far a long stage of Build has got: done of
// total steps of the stage named (one of the Stage constants). Build
// makes its calls one at a time, from whichever goroutine finished a
// step; done counts up from 0 to total within a stage.
type ProgressFunc func(stage string, done, total int)

// The stages Build reports to a ProgressFunc, the steps of each in
// brackets.
const (
	// StageObjectSearch: the search for a magnetised object at the groups
	// the route finds anomalous (the groups searched; checkDipoles).
	StageObjectSearch = "searching for magnetised objects"
	// StageObjectTails: the traverses beside the objects found, refitted
	// without their fields (the groups looked at; objectTails).
	StageObjectTails = "refitting the traverses beside objects"
	// StageTrackObjectSearch: the search for objects beside further
	// conductors (the groups searched; checkTrackDipoles).
	StageTrackObjectSearch = "searching for magnetised objects beside further conductors"
)

// counter reports stage at 0 of total and returns a function that counts
// one more step done and reports it; safe to call from several
// goroutines. With p nil it does nothing.
func (p ProgressFunc) counter(stage string, total int) func() {
	if p == nil {
		return func() {}
	}
	var mu sync.Mutex
	done := 0
	p(stage, 0, total)
	return func() {
		mu.Lock()
		defer mu.Unlock()
		done++
		p(stage, done, total)
	}
}
