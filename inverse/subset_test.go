package inverse

import "testing"

// TestProblemSubset: Subset keeps the chosen readings in order with every
// per-reading slice the problem gives, and Sigma; nil slices stay nil.
func TestProblemSubset(t *testing.T) {
	p := &Problem{Sigma: 2}
	for i := range 5 {
		f := float64(i)
		p.Points = append(p.Points, [3]float64{f, 0, 1})
		p.Phasors = append(p.Phasors, [3]complex128{complex(f, 1), 0, 0})
		p.Travel = append(p.Travel, [3]float64{0, f / 10, 0})
	}
	q := p.Subset(func(i int) bool { return i%2 == 0 })
	if q.Sigma != 2 || len(q.Points) != 3 || len(q.Phasors) != 3 || len(q.Travel) != 3 || q.Fields != nil {
		t.Fatalf("subset %+v", q)
	}
	for k, i := range []int{0, 2, 4} {
		if q.Points[k] != p.Points[i] || q.Phasors[k] != p.Phasors[i] || q.Travel[k] != p.Travel[i] {
			t.Errorf("reading %d of the subset is not reading %d", k, i)
		}
	}
	q.Points[0][0] = 99
	if p.Points[0][0] != 0 {
		t.Error("the subset shares its readings' arrays with the problem")
	}
}
