package broker

import "testing"

// With DataMaxBytes the raw data stream keeps at most that many bytes: new
// batches are still taken once it is reached, and the oldest give way.
func TestDataMaxBytesDiscardsOldest(t *testing.T) {
	ctx, js := brokerJS(t)
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
	_, info := streamInfo(t, ctx, js, StreamData)
	if info.State.Bytes > limit || info.State.LastSeq != 64 || info.State.FirstSeq <= 1 {
		t.Errorf("stream holds %d bytes, sequences %d to %d; want at most %d bytes ending at 64, the first ones discarded",
			info.State.Bytes, info.State.FirstSeq, info.State.LastSeq, limit)
	}
}
