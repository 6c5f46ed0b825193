package broker

import "testing"

// Replay with Mark sets HeaderReplay to "1" on every message it stores,
// so that the pipeline can tell a replayed log from a live gateway;
// PublishBatch and Replay without Mark (a gateway, a test standing in
// for one) leave it off.
func TestReplayMarksItsMessages(t *testing.T) {
	ctx, js := brokerJS(t)
	if _, err := Setup(ctx, js, StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	b := testBatch(10)
	if _, err := PublishBatch(ctx, js, b, ContentJSON); err != nil {
		t.Fatal(err)
	}
	later := testBatch(20)
	for i := range later.Time {
		later.Time[i] += 100
	}
	if _, err := Replay(ctx, js, []*Batch{later}, &ReplaySettings{Mark: true}); err != nil {
		t.Fatal(err)
	}
	last := testBatch(5)
	for i := range last.Time {
		last.Time[i] += 200
	}
	if _, err := Replay(ctx, js, []*Batch{last}, nil); err != nil {
		t.Fatal(err)
	}
	st, err := js.Stream(ctx, StreamData)
	if err != nil {
		t.Fatal(err)
	}
	for seq, want := range map[uint64]string{1: "", 2: "1", 3: ""} {
		m, err := st.GetMsg(ctx, seq)
		if err != nil {
			t.Fatal(err)
		}
		if got := m.Header.Get(HeaderReplay); got != want {
			t.Errorf("message %d: %s %q, want %q", seq, HeaderReplay, got, want)
		}
	}
}
