package report

import (
	"bytes"
	"path/filepath"
	"sync"
	"testing"

	"undercurrent/inverse/simulate"
)

// TestBuildProgressCountsObjectPhase: Build tells its Progress how far
// the search for magnetised objects has got, one call at a time, counting
// from 0 to the total of each stage: every group searched, then every
// group looked at for an object's tail (objectTails); and the document is
// the same as without it. The survey is drum-beside-cable.toml (the
// invented Pellow Bank): a steel drum beside a 20 A cable, simulated, which
// the route reports as one object (the simulated truth).
func TestBuildProgressCountsObjectPhase(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 18 traverses with the object search, twice")
	}
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", "open", "drum-beside-cable.toml"))
	if err != nil {
		t.Fatal(err)
	}
	type call struct {
		stage       string
		done, total int
	}
	var calls []call
	var busy sync.Mutex
	progress := func(stage string, done, total int) {
		if !busy.TryLock() {
			t.Errorf("progress called while another call was under way (%s %d of %d)", stage, done, total)
			return
		}
		defer busy.Unlock()
		calls = append(calls, call{stage, done, total})
	}
	d := simulatedDocWith(t, sc, &BuildSettings{Progress: progress})
	objects := 0
	for _, f := range d.Findings {
		if f.Kind == "dipole-anomaly" {
			objects++
		}
	}
	if objects != 1 {
		t.Fatalf("%d objects reported, want the one drum", objects)
	}
	// Each stage's calls in a run: done counting 0, 1, ..., total.
	byStage := map[string][]call{}
	var order []string
	for _, c := range calls {
		if len(byStage[c.stage]) == 0 {
			order = append(order, c.stage)
		}
		byStage[c.stage] = append(byStage[c.stage], c)
	}
	for _, stage := range order {
		cs := byStage[stage]
		total := cs[0].total
		if len(cs) != total+1 {
			t.Errorf("%s: %d calls for %d groups, want one at the start and one per group", stage, len(cs), total)
		}
		for k, c := range cs {
			if c.done != k || c.total != total {
				t.Errorf("%s: call %d says %d of %d, want %d of %d", stage, k, c.done, c.total, k, total)
			}
		}
	}
	search, tails := byStage[StageObjectSearch], byStage[StageObjectTails]
	if len(search) < 2 || search[0].total > len(d.Groups) {
		t.Errorf("%s: %v, want at least the drum's group searched, no more than the %d groups", StageObjectSearch, search, len(d.Groups))
	}
	if len(tails) == 0 || tails[0].total != len(d.Groups) {
		t.Errorf("%s: %v, want every one of the %d groups looked at", StageObjectTails, tails, len(d.Groups))
	}
	if len(order) < 2 || order[0] != StageObjectSearch || order[1] != StageObjectTails {
		t.Errorf("stages in the order %q, want the search, then the tails", order)
	}
	var with, without bytes.Buffer
	if err := WriteJSON(&with, d); err != nil {
		t.Fatal(err)
	}
	if err := WriteJSON(&without, simulatedDoc(t, sc)); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(with.Bytes(), without.Bytes()) {
		t.Error("the document built with a progress hook differs from the one built without")
	}
}
