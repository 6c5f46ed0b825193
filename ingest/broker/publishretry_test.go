package broker

import (
	"testing"
	"time"
)

// While no stream answers (a cluster electing a new leader after losing a
// node; here the stream is created only after the first attempt),
// PublishBatch tries again instead of failing the batch: the batch is
// stored once.
func TestPublishBatchRetriesWhileNoStreamAnswers(t *testing.T) {
	ctx, js := brokerJS(t)
	tried := make(chan struct{})
	set := make(chan error, 1)
	go func() {
		<-tried
		time.Sleep(500 * time.Millisecond) // after PublishBatch's first attempt
		_, err := Setup(ctx, js, StreamSettings{})
		set <- err
	}()
	// The first attempt, before the stream exists, is refused at once
	// ("no responders"); PublishBatch must still succeed.
	if _, err := js.Publish(ctx, DataSubject("kestrel-moor", "km-1"), []byte("{}")); err == nil {
		t.Fatal("a publish succeeded before the stream existed")
	}
	close(tried)
	ack, err := PublishBatch(ctx, js, testBatch(10), ContentJSON)
	if err != nil {
		t.Fatalf("PublishBatch gave up while the stream was being created: %v", err)
	}
	if err := <-set; err != nil {
		t.Fatal(err)
	}
	if ack.Stream != StreamData || ack.Duplicate {
		t.Errorf("ack %+v, want a new message in %s", ack, StreamData)
	}
}
