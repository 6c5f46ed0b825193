package broker

import "testing"

// The broker drops a batch whose message id it already holds. With an id
// of asset/sensor/first time only, a longer batch starting at the same time
// as a stored one (data sent again with other batch edges) was dropped as
// "already stored", and the samples the stored batch lacked were lost
// without a word. Only a batch identical to a stored one, in either
// encoding, may be dropped.
func TestPublishBatchDedupsOnlyIdenticalBatches(t *testing.T) {
	ctx, js := brokerJS(t)
	if _, err := Setup(ctx, js, StreamSettings{Memory: true}); err != nil {
		t.Fatal(err)
	}
	publish := func(b *Batch, enc string) bool {
		t.Helper()
		ack, err := PublishBatch(ctx, js, b, enc)
		if err != nil {
			t.Fatal(err)
		}
		return ack.Duplicate
	}
	if publish(testBatch(10), ContentJSON) {
		t.Fatal("first batch taken as a duplicate")
	}
	if publish(testBatch(25), ContentJSON) {
		t.Error("a longer batch from the same first time was dropped as already stored")
	}
	changed := testBatch(10)
	changed.Bz[9] += 1 // same times, one value differs
	if publish(changed, ContentJSON) {
		t.Error("a batch with the same times but other values was dropped as already stored")
	}
	if !publish(testBatch(25), ContentArrow) {
		t.Error("the same 25 samples sent again (as Arrow) were stored twice")
	}
	_, info := streamInfo(t, ctx, js, StreamData)
	if info.State.Msgs != 3 {
		t.Errorf("data stream holds %d batches, want 3", info.State.Msgs)
	}
}
