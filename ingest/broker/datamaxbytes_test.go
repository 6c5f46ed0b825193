package broker

import (
	"context"
	"testing"
	"time"
)

// With DataMaxBytes the raw data stream keeps at most that many bytes: new
// batches are still taken once it is reached, and the oldest give way.
func TestDataMaxBytesDiscardsOldest(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a broker")
	}
	s := startTestServer(t, ServerConfig{MQTTPort: -1})
	_, js := connectJS(t, s.ClientURL(), Auth{})
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	const limit = 64 << 10
	if _, err := Setup(ctx, js, StreamSettings{DataMaxBytes: limit}); err != nil {
		t.Fatal(err)
	}
	payload := make([]byte, 4<<10)
	for i := 0; i < 64; i++ { // 256 KiB, four times the bound
		if _, err := js.Publish(ctx, "uc.data.kestrel-moor.km-1", payload); err != nil {
			t.Fatalf("batch %d refused: %v", i, err)
		}
	}
	st, err := js.Stream(ctx, StreamData)
	if err != nil {
		t.Fatal(err)
	}
	info, err := st.Info(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if info.State.Bytes > limit || info.State.LastSeq != 64 || info.State.FirstSeq <= 1 {
		t.Errorf("stream holds %d bytes, sequences %d to %d; want at most %d bytes ending at 64, the first ones discarded",
			info.State.Bytes, info.State.FirstSeq, info.State.LastSeq, limit)
	}
}
