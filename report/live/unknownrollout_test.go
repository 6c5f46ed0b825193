package live

import (
	"context"
	"errors"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"undercurrent/ingest/broker"
)

// While a new asset is rolled out, a worker whose site file does not list
// it yet leaves its data to the worker that lists and holds it instead of
// dead-lettering every batch as unknown-asset (README: an asset can be
// "newly added to the site file" while several serve processes share the
// assets). Data for an asset that no worker lists is still dead-lettered.
// Simulated truth: the assets each test site file lists.
func TestUnknownAssetLeftToWorkerThatListsIt(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a broker and two workers")
	}
	h := newHarness(t)
	old := testSite(t, testSiteText)
	plus := testSite(t, testSiteText+strings.Replace(testSiteText[strings.Index(testSiteText, "[[asset]]"):], `name = "fenwick-lane"`, `name = "kestrel-moor"`, 1))
	rNew := h.start(plus, "w-new")
	leases := h.leases()
	waitFor(t, 20*time.Second, "w-new to hold kestrel-moor", func() bool {
		e, err := leases.Get(context.Background(), "kestrel-moor")
		return err == nil && string(e.Value()) == "w-new"
	})
	rOld := h.start(old, "w-old")
	h.publishAsset("kestrel-moor", 0, 1)
	waitFor(t, 30*time.Second, "kestrel-moor's estimates", func() bool { return len(h.estimatesOf("kestrel-moor")) >= 2 })

	// An asset no worker lists: its consumer is made in a sweep that also
	// went over kestrel-moor's data, stored before.
	ctx := context.Background()
	if _, err := h.js.Publish(ctx, "uc.data.harrow-spur.p0", []byte(`{"time":[1],"bx":[1],"by":[1],"bz":[1]}`)); err != nil {
		t.Fatal(err)
	}
	dlq, err := h.js.Stream(ctx, broker.StreamDeadLetter)
	if err != nil {
		t.Fatal(err)
	}
	waitFor(t, 30*time.Second, "harrow-spur's dead letter", func() bool {
		m, err := dlq.GetLastMsgForSubject(ctx, broker.DeadLetterSubject(broker.ReasonUnknownAsset))
		return err == nil && m.Header.Get(broker.HeaderSubject) == "uc.data.harrow-spur.p0"
	})
	data, err := h.js.Stream(ctx, broker.StreamData)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := data.Consumer(ctx, unknownConsumerName(broker.ReasonUnknownAsset+"/kestrel-moor")); !errors.Is(err, jetstream.ErrConsumerNotFound) {
		t.Errorf("an unknown-asset consumer for kestrel-moor, which w-new lists and holds (lookup: %v)", err)
	}
	info, err := dlq.Info(ctx, jetstream.WithSubjectFilter(broker.DeadLetterSubject(broker.ReasonUnknownAsset)))
	if err != nil {
		t.Fatal(err)
	}
	if n := info.State.Subjects[broker.DeadLetterSubject(broker.ReasonUnknownAsset)]; n != 1 {
		t.Errorf("%d unknown-asset dead letters, want 1 (harrow-spur's only)", n)
	}
	rOld.stop(t)
	rNew.stop(t)
}
