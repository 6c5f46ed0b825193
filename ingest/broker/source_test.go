package broker

import (
	"context"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"undercurrent/ingest"
)

func TestSourceCollectsLiveData(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	s := startTestServer(t, ServerConfig{MQTTPort: -1})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	if _, err := Setup(ctx, js, StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 3; i++ {
		for _, sensor := range []string{"m1", "m2"} {
			b := testBatch(20)
			b.Sensor = sensor
			for j := range b.Time {
				b.Time[j] += float64(i)
			}
			if _, err := PublishBatch(ctx, js, b, ContentArrow); err != nil {
				t.Fatal(err)
			}
		}
	}
	if _, err := js.Publish(ctx, "uc.data.kestrel-moor.m1", []byte(`{"time":[1],"bx":[NaN]}`)); err != nil {
		t.Fatal(err)
	}
	// Another asset's data is not read.
	other := testBatch(5)
	other.Asset = "fenwick-lane"
	PublishBatch(ctx, js, other, ContentJSON)

	src, err := Subscribe(ctx, js, "kestrel-moor", &SourceSettings{All: true, Idle: 500 * time.Millisecond, Mem: mem})
	if err != nil {
		t.Fatal(err)
	}
	got, err := ingest.Collect(src)
	src.Release()
	if err != nil {
		t.Fatal(err)
	}
	if got.Len() != 120 || got.Frame != ingest.FrameSensor {
		t.Fatalf("collected %d rows in frame %v, want 120 in the sensor frame", got.Len(), got.Frame)
	}
	if got.Group[0] != "m1" || got.Group[20] != "m2" || got.Meta["asset"] != "kestrel-moor" {
		t.Errorf("groups %q %q, meta %v", got.Group[0], got.Group[20], got.Meta)
	}
	if n, bad := src.Skipped(); n != 1 || bad == nil {
		t.Errorf("skipped %d (%v), want the one malformed message", n, bad)
	}
}

func TestSourceMaxBatches(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	s := startTestServer(t, ServerConfig{MQTTPort: -1})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	Setup(ctx, js, StreamSettings{Memory: true})
	src, err := Subscribe(ctx, js, "kestrel-moor", &SourceSettings{MaxBatches: 2})
	if err != nil {
		t.Fatal(err)
	}
	defer src.Release()
	// Only data published after Subscribe is read by default.
	for i := 0; i < 4; i++ {
		b := testBatch(3)
		b.Time[0], b.Time[1], b.Time[2] = float64(3*i), float64(3*i+1), float64(3*i+2)
		PublishBatch(ctx, js, b, ContentJSON)
	}
	n := 0
	for src.Next() {
		if src.RecordBatch().NumRows() != 3 {
			t.Fatalf("batch of %d rows", src.RecordBatch().NumRows())
		}
		n++
	}
	if n != 2 || src.Err() != nil {
		t.Fatalf("%d batches, err %v; want 2 and a clean end", n, src.Err())
	}
}
